import type { AudioBlock } from './audio-source.js';
import { BYTES_PER_SAMPLE, deinterleave, type SampleEncoding } from './pcm-decode.js';

/**
 * Gathers interleaved PCM bytes that arrive in chunks of any size (split anywhere, even
 * inside a sample) into fixed blocks of planar float frames. Pure: no I/O; the byte buffer
 * and the block's channel arrays are allocated once and reused for every block.
 */
export class FrameAssembler {
  readonly frameBytes: number;
  private readonly bytes: Uint8Array;
  private fill = 0;
  private readonly arrays: Float32Array[];
  private readonly out: { channels: readonly Float32Array[]; length: number };

  constructor(
    private readonly encoding: SampleEncoding,
    channels: number,
    readonly blockFrames: number,
  ) {
    this.frameBytes = BYTES_PER_SAMPLE[encoding] * channels;
    this.bytes = new Uint8Array(blockFrames * this.frameBytes);
    this.arrays = Array.from({ length: channels }, () => new Float32Array(blockFrames));
    this.out = { channels: this.arrays, length: 0 };
  }

  /** Copy as much of chunk[from..] as fits in the current block; returns the offset after what was taken. */
  take(chunk: Uint8Array, from = 0): number {
    const n = Math.min(chunk.length - from, this.bytes.length - this.fill);
    this.bytes.set(chunk.subarray(from, from + n), this.fill);
    this.fill += n;
    return from + n;
  }

  /** True when the block holds blockFrames whole frames. */
  get full(): boolean {
    return this.fill === this.bytes.length;
  }

  /** Whole frames held and not yet emitted. */
  get heldFrames(): number {
    return Math.floor(this.fill / this.frameBytes);
  }

  /** Bytes of an incomplete frame at the end of what is held. */
  get partialBytes(): number {
    return this.fill % this.frameBytes;
  }

  /** Forget the bytes of an incomplete trailing frame; returns how many were dropped. */
  discardPartialFrame(): number {
    const p = this.partialBytes;
    this.fill -= p;
    return p;
  }

  /**
   * Decode the whole frames held into the block and return it. Bytes of an incomplete
   * trailing frame stay for the next block. The returned block is reused by the next call.
   */
  emit(): AudioBlock {
    const frames = this.heldFrames;
    deinterleave(this.encoding, this.bytes, frames, this.arrays);
    const used = frames * this.frameBytes;
    const rest = this.fill - used;
    if (rest > 0) this.bytes.copyWithin(0, used, this.fill);
    this.fill = rest;
    this.out.length = frames;
    return this.out;
  }
}

/**
 * Cuts a stream of planar sample blocks into overlapping frames: a frame of `frame`
 * samples per channel every `hop` samples. Pure: blocks in, frames out through a callback,
 * with one buffer per channel allocated up front.
 */
export class Framer {
  private readonly buffers: Float64Array[];
  private filled = 0;
  /** Samples still to skip before the next frame starts (when hop > frame). */
  private skip = 0;

  constructor(
    readonly channels: number,
    readonly frame: number,
    readonly hop: number,
    /** Where to build the frames (one array of `frame` samples per channel), e.g. the analyzer's own (HopAnalyzer.inputFrames); default: new arrays. */
    buffers?: readonly Float64Array[] | null,
  ) {
    if (buffers && (buffers.length !== channels || buffers.some((b) => b.length !== frame))) throw new Error(`Framer: ${channels} buffers of ${frame} samples needed`);
    this.buffers = buffers ? [...buffers] : Array.from({ length: channels }, () => new Float64Array(frame));
  }

  /** Feed `length` samples of each channel; `onFrame` gets the frame buffers (valid during the call). */
  push(block: readonly Float32Array[], length: number, onFrame: (frames: readonly Float64Array[]) => void): void {
    let pos = 0;
    const n = this.frame;
    while (pos < length) {
      if (this.skip > 0) {
        const s = Math.min(this.skip, length - pos);
        this.skip -= s;
        pos += s;
        continue;
      }
      const take = Math.min(n - this.filled, length - pos);
      for (let c = 0; c < this.channels; c++) {
        const src = block[c]!;
        // The typed arrays' own copy (float32 to float64, exact): about five times faster than a
        // loop over the samples here (4 channels at 48 kHz: 0.05 against 0.32 ms a second); a
        // whole block (the usual case: blocks of one hop) needs no view of its part.
        this.buffers[c]!.set(pos === 0 && take === src.length ? src : src.subarray(pos, pos + take), this.filled);
      }
      this.filled += take;
      pos += take;
      if (this.filled === n) {
        onFrame(this.buffers);
        if (this.hop < n) {
          for (let c = 0; c < this.channels; c++) this.buffers[c]!.copyWithin(0, this.hop, n);
          this.filled = n - this.hop;
        } else {
          this.filled = 0;
          this.skip = this.hop - n;
        }
      }
    }
  }
}

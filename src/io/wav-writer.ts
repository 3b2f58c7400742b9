import { closeSync, fsyncSync, openSync, writeSync } from 'node:fs';
import { UsageError } from '../errors.js';

export type WavSampleFormat = 's16' | 's24' | 's32' | 'f32';

const BYTES: Record<WavSampleFormat, number> = { s16: 2, s24: 3, s32: 4, f32: 4 };

function header(rate: number, channels: number, fmt: WavSampleFormat, dataBytes: number): Buffer {
  const bps = BYTES[fmt];
  const h = Buffer.alloc(44);
  h.write('RIFF', 0, 'ascii');
  h.writeUInt32LE(Math.min(0xffffffff, 36 + dataBytes), 4);
  h.write('WAVE', 8, 'ascii');
  h.write('fmt ', 12, 'ascii');
  h.writeUInt32LE(16, 16);
  h.writeUInt16LE(fmt === 'f32' ? 3 : 1, 20);
  h.writeUInt16LE(channels, 22);
  h.writeUInt32LE(rate, 24);
  h.writeUInt32LE(rate * channels * bps, 28);
  h.writeUInt16LE(channels * bps, 32);
  h.writeUInt16LE(bps * 8, 34);
  h.write('data', 36, 'ascii');
  h.writeUInt32LE(Math.min(0xffffffff, dataBytes), 40);
  return h;
}

/** Encode planar float samples (clipped to [-1, 1]) as interleaved little-endian PCM. */
export function encodeInterleaved(channels: readonly Float32Array[], length: number, fmt: WavSampleFormat): Buffer {
  const n = channels.length;
  const bps = BYTES[fmt];
  const buf = Buffer.alloc(length * n * bps);
  let o = 0;
  for (let i = 0; i < length; i++) {
    for (let c = 0; c < n; c++) {
      const raw = channels[c]![i]!;
      const v = raw > 1 ? 1 : raw < -1 ? -1 : raw;
      switch (fmt) {
        case 's16':
          buf.writeInt16LE(Math.round(v * 32767), o);
          break;
        case 's24':
          buf.writeIntLE(Math.round(v * 8388607), o, 3);
          break;
        case 's32':
          buf.writeInt32LE(Math.round(v * 2147483647), o);
          break;
        case 'f32':
          buf.writeFloatLE(raw, o);
          break;
      }
      o += bps;
    }
  }
  return buf;
}

/**
 * A WAV file written block by block in constant memory. The header's sizes are patched on
 * close(); until then the file holds a valid header with the sizes written so far at the
 * last flush.
 */
export class WavWriter {
  private fd: number;
  private dataBytes = 0;
  private closed = false;

  constructor(
    readonly path: string,
    readonly sampleRate: number,
    readonly channels: number,
    readonly format: WavSampleFormat = 's16',
  ) {
    if (!Number.isInteger(sampleRate) || sampleRate <= 0) throw new UsageError(`sample rate ${sampleRate} is not a positive whole number`);
    if (!Number.isInteger(channels) || channels < 1 || channels > 64) throw new UsageError(`channel count ${channels} is not between 1 and 64`);
    try {
      this.fd = openSync(path, 'w');
    } catch (err) {
      throw new UsageError(`cannot write ${path}: ${(err as Error).message}`);
    }
    writeSync(this.fd, header(sampleRate, channels, format, 0), 0, 44, 0);
  }

  /** Append `length` frames of planar float samples. */
  write(channels: readonly Float32Array[], length = channels[0]?.length ?? 0): void {
    if (this.closed) throw new Error('WavWriter: write after close');
    if (channels.length !== this.channels) throw new Error(`WavWriter: got ${channels.length} channels, expected ${this.channels}`);
    const buf = encodeInterleaved(channels, length, this.format);
    writeSync(this.fd, buf, 0, buf.length, 44 + this.dataBytes);
    this.dataBytes += buf.length;
  }

  /** Patch the header with the sizes written so far and push the data to disk. */
  flush(): void {
    if (this.closed) return;
    writeSync(this.fd, header(this.sampleRate, this.channels, this.format, this.dataBytes), 0, 44, 0);
    fsyncSync(this.fd);
  }

  close(): void {
    if (this.closed) return;
    this.flush();
    closeSync(this.fd);
    this.closed = true;
  }
}

/** Write a whole planar float signal to a WAV file. */
export function writeWavFile(path: string, sampleRate: number, channels: readonly Float32Array[], format: WavSampleFormat = 's16'): void {
  const w = new WavWriter(path, sampleRate, channels.length, format);
  const block = 65536;
  const total = channels[0]?.length ?? 0;
  for (let start = 0; start < total; start += block) {
    const end = Math.min(total, start + block);
    w.write(channels.map((c) => c.subarray(start, end)), end - start);
  }
  w.close();
}

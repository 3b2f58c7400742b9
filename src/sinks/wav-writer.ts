import { UsageError } from '../util/errors.js';

export type WavSampleFormat = 's16' | 's24' | 's32' | 'f32';

const BYTES: Record<WavSampleFormat, number> = { s16: 2, s24: 3, s32: 4, f32: 4 };

/**
 * The WAV header. Integer PCM: the 16-byte fmt chunk (WAVE_FORMAT_PCM). Float: the 18-byte fmt
 * chunk with cbSize 0 (WAVE_FORMAT_IEEE_FLOAT) and a fact chunk with the frame count, as the
 * Microsoft WAVE specification asks of every format that is not PCM (multimedia programming
 * interface and data specifications 1.0, 1991; common practice since): with the 16-byte fmt
 * chunk, sox warns "wave header missing extended part of fmt chunk".
 */
function header(rate: number, channels: number, fmt: WavSampleFormat, dataBytes: number): Buffer {
  const bps = BYTES[fmt];
  const float = fmt === 'f32';
  const fmtSize = float ? 18 : 16;
  const factSize = float ? 12 : 0;
  const size = 12 + 8 + fmtSize + factSize + 8;
  const h = Buffer.alloc(size);
  h.write('RIFF', 0, 'ascii');
  h.writeUInt32LE(Math.min(0xffffffff, size - 8 + dataBytes), 4);
  h.write('WAVE', 8, 'ascii');
  h.write('fmt ', 12, 'ascii');
  h.writeUInt32LE(fmtSize, 16);
  h.writeUInt16LE(float ? 3 : 1, 20);
  h.writeUInt16LE(channels, 22);
  h.writeUInt32LE(rate, 24);
  h.writeUInt32LE(rate * channels * bps, 28);
  h.writeUInt16LE(channels * bps, 32);
  h.writeUInt16LE(bps * 8, 34);
  let at = 36;
  if (float) {
    h.writeUInt16LE(0, at); // cbSize: no extension
    at += 2;
    h.write('fact', at, 'ascii');
    h.writeUInt32LE(4, at + 4);
    h.writeUInt32LE(Math.min(0xffffffff, Math.floor(dataBytes / (channels * bps))), at + 8);
    at += 12;
  }
  h.write('data', at, 'ascii');
  h.writeUInt32LE(Math.min(0xffffffff, dataBytes), at + 4);
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
 * A whole planar float signal as the consecutive byte chunks of a WAV file: the header (its
 * sizes known up front) and then the samples in blocks, so it can be written sequentially,
 * to a file or straight through a FIFO (see output-target.ts).
 */
export function* wavFileChunks(sampleRate: number, channels: readonly Float32Array[], format: WavSampleFormat = 's16'): Generator<Uint8Array> {
  if (!Number.isInteger(sampleRate) || sampleRate <= 0) throw new UsageError(`sample rate ${sampleRate} is not a positive whole number`);
  if (!Number.isInteger(channels.length) || channels.length < 1 || channels.length > 64) throw new UsageError(`channel count ${channels.length} is not between 1 and 64`);
  const total = channels[0]!.length;
  yield header(sampleRate, channels.length, format, total * channels.length * BYTES[format]);
  const block = 65536;
  for (let start = 0; start < total; start += block) {
    const end = Math.min(total, start + block);
    yield encodeInterleaved(
      channels.map((c) => c.subarray(start, end)),
      end - start,
      format,
    );
  }
}

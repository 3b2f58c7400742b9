/**
 * Pure decoding of interleaved little-endian PCM bytes into planar float channels.
 * No I/O, no allocation: callers own the byte buffer and the output arrays.
 *
 * Scaling (common practice, no source; it is also how sox converts to float): signed
 * integers are divided by 2^(bits-1), so full negative scale is exactly -1; unsigned 8-bit
 * is offset by 128 first. Float samples are passed through unchanged (not clipped), except
 * samples that cannot be sound: NaN, +-Infinity and magnitudes above MAX_FLOAT_SAMPLE are
 * replaced with 0 (see ReplacedSamples), so that one bad sample cannot poison the spectra,
 * the evidence memory and every hop after it. Integer encodings cannot hold such values.
 */
export type SampleEncoding = 'u8' | 's16' | 's24' | 's32' | 'f32' | 'f64';

export const BYTES_PER_SAMPLE: Readonly<Record<SampleEncoding, number>> = {
  u8: 1,
  s16: 2,
  s24: 3,
  s32: 4,
  f32: 4,
  f64: 8,
};

/**
 * Largest float sample magnitude taken as sound: 1000 = +60 dB above full scale. Float
 * recordings may run over full scale by a few dB of headroom, never by 60 dB; beyond this,
 * and NaN or Inf, a sample is a writer's fault (our bound; common practice, no source).
 * It also keeps a hop's power (sum of squares over a frame) far inside float32's range.
 */
export const MAX_FLOAT_SAMPLE = 1000;

/**
 * What the last deinterleave call replaced: the caller owns one of these and reads it after
 * each call (nothing is allocated per block). `firstFrame` is the frame index, counted from
 * the call's first frame, of the earliest replaced sample (-1 when none); `firstValue` is
 * that sample's value as read (NaN, +-Infinity or a huge number; 0 when none).
 */
export interface ReplacedSamples {
  count: number;
  firstFrame: number;
  firstValue: number;
}

export function noReplacedSamples(): ReplacedSamples {
  return { count: 0, firstFrame: -1, firstValue: 0 };
}

const S16 = 1 / 32768;
const S24 = 1 / 8388608;
const S32 = 1 / 2147483648;

/** One DataView per byte buffer: the sources reuse their buffers, so nothing is allocated per block. */
const views = new WeakMap<Uint8Array, DataView>();
function viewOf(bytes: Uint8Array): DataView {
  let v = views.get(bytes);
  if (!v) {
    v = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
    views.set(bytes, v);
  }
  return v;
}

/**
 * Decode `frames` interleaved frames starting at `bytes[0]` into `out[c][outOffset ..]`.
 * `bytes` must hold at least frames * channels * BYTES_PER_SAMPLE[encoding] bytes;
 * `out` must hold one array per channel. Float samples that are not sound are replaced with 0
 * and, when `replaced` is given, counted in it (its fields are set afresh by every call).
 */
export function deinterleave(
  encoding: SampleEncoding,
  bytes: Uint8Array,
  frames: number,
  out: readonly Float32Array[],
  outOffset = 0,
  replaced?: ReplacedSamples,
): void {
  if (replaced) {
    replaced.count = 0;
    replaced.firstFrame = -1;
    replaced.firstValue = 0;
  }
  const channels = out.length;
  const view = viewOf(bytes);
  const step = BYTES_PER_SAMPLE[encoding];
  const stride = step * channels;
  for (let c = 0; c < channels; c++) {
    const dst = out[c]!;
    let o = c * step;
    const end = outOffset + frames;
    switch (encoding) {
      case 'u8':
        for (let i = outOffset; i < end; i++, o += stride) dst[i] = (bytes[o]! - 128) / 128;
        break;
      case 's16':
        for (let i = outOffset; i < end; i++, o += stride) dst[i] = view.getInt16(o, true) * S16;
        break;
      case 's24':
        for (let i = outOffset; i < end; i++, o += stride) {
          // Three bytes, sign taken from the top byte.
          const v = bytes[o]! | (bytes[o + 1]! << 8) | (bytes[o + 2]! << 16);
          dst[i] = ((v << 8) >> 8) * S24;
        }
        break;
      case 's32':
        for (let i = outOffset; i < end; i++, o += stride) dst[i] = view.getInt32(o, true) * S32;
        break;
      case 'f32':
        for (let i = outOffset; i < end; i++, o += stride) {
          const v = view.getFloat32(o, true);
          // Written so that NaN fails the test too.
          if (v <= MAX_FLOAT_SAMPLE && v >= -MAX_FLOAT_SAMPLE) dst[i] = v;
          else replace(dst, i, v, i - outOffset, replaced);
        }
        break;
      case 'f64':
        for (let i = outOffset; i < end; i++, o += stride) {
          const v = view.getFloat64(o, true);
          if (v <= MAX_FLOAT_SAMPLE && v >= -MAX_FLOAT_SAMPLE) dst[i] = v;
          else replace(dst, i, v, i - outOffset, replaced);
        }
        break;
    }
  }
}

function replace(dst: Float32Array, i: number, value: number, frame: number, replaced: ReplacedSamples | undefined): void {
  dst[i] = 0;
  if (!replaced) return;
  replaced.count++;
  if (replaced.firstFrame < 0 || frame < replaced.firstFrame) {
    replaced.firstFrame = frame;
    replaced.firstValue = value;
  }
}

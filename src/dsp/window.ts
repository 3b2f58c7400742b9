import type { FftBuffer } from './fft.js';

/** Periodic Hann window of length n (common practice for STFT analysis, no source). */
export function hannWindow(n: number): Float64Array {
  const w = new Float64Array(n);
  for (let i = 0; i < n; i++) w[i] = 0.5 - 0.5 * Math.cos((2 * Math.PI * i) / n);
  return w;
}

/**
 * out[i] = x[i] * window[i] for a frame of n samples (n a multiple of 4), returning the frame's
 * sum of squares: four partial sums (samples i mod 4, each in order) added as (s0 + s2) + (s1 + s3),
 * so that the additions do not wait on one another; the WebAssembly kernel window1
 * (./gcc-kernels.wat) adds the same numbers in the same order.
 */
export function windowFrame(x: Float64Array, window: Float64Array, out: FftBuffer): number {
  let s0 = 0;
  let s1 = 0;
  let s2 = 0;
  let s3 = 0;
  for (let i = 0; i < window.length; i += 4) {
    const v0 = x[i]!;
    const v1 = x[i + 1]!;
    const v2 = x[i + 2]!;
    const v3 = x[i + 3]!;
    s0 += v0 * v0;
    s1 += v1 * v1;
    s2 += v2 * v2;
    s3 += v3 * v3;
    out[i] = v0 * window[i]!;
    out[i + 1] = v1 * window[i + 1]!;
    out[i + 2] = v2 * window[i + 2]!;
    out[i + 3] = v3 * window[i + 3]!;
  }
  return s0 + s2 + (s1 + s3);
}

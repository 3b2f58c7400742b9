import { describe, expect, it } from 'vitest';
import { RealFft } from '../../src/dsp/fft.js';

// Reference: the DFT definition itself, X[k] = sum_n x[n] exp(-j 2 pi k n / N), evaluated
// directly in double precision (common practice, no source).
function naiveDft(x: Float64Array): { re: Float64Array; im: Float64Array } {
  const n = x.length;
  const re = new Float64Array(n / 2 + 1);
  const im = new Float64Array(n / 2 + 1);
  for (let k = 0; k <= n / 2; k++) {
    for (let t = 0; t < n; t++) {
      re[k]! += x[t]! * Math.cos((2 * Math.PI * k * t) / n);
      im[k]! -= x[t]! * Math.sin((2 * Math.PI * k * t) / n);
    }
  }
  return { re, im };
}

describe('RealFft against the direct DFT definition', () => {
  for (const n of [8, 64, 1024]) {
    it(`forward and inverse, n = ${n}`, () => {
      let seed = 12345;
      const rand = () => ((seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31) - 0.5;
      const x = new Float64Array(n).map(() => rand());
      const fft = new RealFft(n);
      const re = new Float64Array(fft.bins);
      const im = new Float64Array(fft.bins);
      fft.forward(x, re, im);
      const ref = naiveDft(x);
      for (let k = 0; k < fft.bins; k++) {
        expect(re[k]).toBeCloseTo(ref.re[k]!, 9);
        expect(im[k]).toBeCloseTo(ref.im[k]!, 9);
      }
      const back = new Float64Array(n);
      fft.inverse(re, im, back);
      for (let t = 0; t < n; t++) expect(back[t]).toBeCloseTo(x[t]!, 12);
    });
  }
});

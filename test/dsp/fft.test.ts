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

describe.each([
  // fft.js works in double precision; PFFFT (WebAssembly SIMD) in single precision, so its
  // tolerance is a few float32 rounding steps of the largest bin (about 2^-23 * N).
  ['fft.js', 'fft.js' as const, 9, 12],
  ['the default backend', 'auto' as const, 3, 5],
])('RealFft (%s) against the direct DFT definition', (_name, backend, specDigits, timeDigits) => {
  it('names its backend', () => {
    expect(['pffft', 'fft.js']).toContain(new RealFft(1024, backend).backend);
  });
  for (const n of [8, 64, 1024]) {
    it(`forward, interleaved forward and inverse, n = ${n}`, () => {
      let seed = 12345;
      const rand = () => ((seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31) - 0.5;
      const x = new Float64Array(n).map(() => rand());
      const fft = new RealFft(n, backend);
      const re = new Float64Array(fft.bins);
      const im = new Float64Array(fft.bins);
      fft.forward(x, re, im);
      const ref = naiveDft(x);
      for (let k = 0; k < fft.bins; k++) {
        expect(re[k]).toBeCloseTo(ref.re[k]!, specDigits);
        expect(im[k]).toBeCloseTo(ref.im[k]!, specDigits);
      }
      const input = fft.createInput();
      const spec = fft.createSpectrum();
      for (let t = 0; t < n; t++) input[t] = x[t]!;
      fft.forwardInterleaved(input, spec);
      for (let k = 1; k < n / 2; k++) {
        expect(spec[2 * k]).toBeCloseTo(ref.re[k]!, specDigits);
        expect(spec[2 * k + 1]).toBeCloseTo(ref.im[k]!, specDigits);
      }
      const back = new Float64Array(n);
      fft.inverse(re, im, back);
      for (let t = 0; t < n; t++) expect(back[t]).toBeCloseTo(x[t]!, timeDigits);
    });
  }
});

describe('RealFft.release: PFFFT buffers given back are reused', () => {
  it('3000 FFTs of 1024 made and released one after another (72 MiB of buffers, against an 8 MiB arena) all transform right', () => {
    // Each FFT holds 4 buffers of its own plus one input and one spectrum (24 KiB); without
    // release the arena is full after about 340 of them ("FFT buffer arena is full").
    const n = 1024;
    const x = new Float64Array(n).map((_, t) => Math.cos((2 * Math.PI * 5 * t) / n));
    for (let i = 0; i < 3000; i++) {
      const fft = new RealFft(n);
      const input = fft.createInput();
      const spec = fft.createSpectrum();
      for (let t = 0; t < n; t++) input[t] = x[t]!;
      fft.forwardInterleaved(input, spec);
      // a cosine of 5 cycles: bin 5 holds n / 2, its neighbours nothing (the DFT of a cosine, common practice)
      if (i % 500 === 0 || i === 2999) {
        expect(spec[10]).toBeCloseTo(n / 2, 2);
        expect(Math.abs(spec[12]!)).toBeLessThan(1e-3);
      }
      fft.release();
    }
  });
});

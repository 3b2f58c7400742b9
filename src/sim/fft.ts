import FFT from 'fft.js';

/**
 * A typed wrapper round fft.js (radix-4, MIT licence, pinned in package.json) for the
 * simulator: complex spectra are interleaved [re0, im0, re1, im1, ...] of length 2 * size.
 */
export class Fft {
  private readonly impl: FFT;

  constructor(readonly size: number) {
    this.impl = new FFT(size);
  }

  complex(): Float64Array {
    return new Float64Array(2 * this.size);
  }

  /** Full complex spectrum of a real signal of `size` samples. */
  forwardReal(input: Float64Array, out: Float64Array): void {
    this.impl.realTransform(out, input);
    this.impl.completeSpectrum(out);
  }

  /** Complex forward transform. */
  forward(input: Float64Array, out: Float64Array): void {
    this.impl.transform(out, input);
  }

  /** Inverse transform, scaled by 1 / size (fft.js convention). */
  inverse(input: Float64Array, out: Float64Array): void {
    this.impl.inverseTransform(out, input);
  }
}

export function nextPow2(n: number): number {
  let p = 1;
  while (p < n) p *= 2;
  return p;
}

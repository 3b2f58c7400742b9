import FFT from 'fft.js';

/** Is n a power of two (and at least 4, as the FFT needs)? */
export function isPowerOfTwo(n: number): boolean {
  return Number.isInteger(n) && n >= 4 && (n & (n - 1)) === 0;
}

/**
 * Real FFT of a fixed size n (power of two) on top of fft.js, with preallocated buffers.
 * Spectra are half spectra: bins 0..n/2 as separate real and imaginary arrays.
 * No allocation per call.
 */
export class RealFft {
  readonly size: number;
  readonly bins: number;
  private readonly full: FFT;
  private readonly half: FFT;
  // fft.js runs about three times faster on plain arrays of doubles than on typed arrays
  // (measured here with node 20), so its buffers are plain arrays, filled once.
  private readonly input: number[];
  private readonly packed: number[];
  private readonly halfIn: number[];
  private readonly halfOut: number[];
  private readonly twCos: Float64Array;
  private readonly twSin: Float64Array;

  constructor(n: number) {
    if (!isPowerOfTwo(n) || n < 8) throw new Error(`FFT size ${n} must be a power of two of at least 8`);
    this.size = n;
    this.bins = n / 2 + 1;
    this.full = new FFT(n);
    this.half = new FFT(n / 2);
    this.input = new Array<number>(n).fill(0);
    this.packed = this.full.createComplexArray() as number[];
    this.halfIn = this.half.createComplexArray() as number[];
    this.halfOut = this.half.createComplexArray() as number[];
    const m = n / 2;
    this.twCos = new Float64Array(m);
    this.twSin = new Float64Array(m);
    for (let k = 0; k < m; k++) {
      this.twCos[k] = Math.cos((2 * Math.PI * k) / n);
      this.twSin[k] = Math.sin((2 * Math.PI * k) / n);
    }
  }

  /** A plain array for an interleaved spectrum (re, im per bin; bins 0..N/2 are filled). */
  createSpectrum(): number[] {
    return this.full.createComplexArray() as number[];
  }

  /** A plain array of N samples for forwardInterleaved (fft.js is fastest on plain arrays). */
  createInput(): number[] {
    return new Array<number>(this.size).fill(0);
  }

  /** Forward transform of a plain array into an interleaved spectrum, with no copies. */
  forwardInterleaved(input: number[], spectrum: number[]): void {
    this.full.realTransform(spectrum, input);
  }

  /** Forward transform: X[k] = sum_n x[n] e^{-j 2 pi k n / N}, k = 0..N/2. */
  forward(input: Float64Array, re: Float64Array, im: Float64Array): void {
    const out = this.packed;
    const x = this.input;
    for (let i = 0; i < this.size; i++) x[i] = input[i]!;
    this.full.realTransform(out, x);
    const b = this.bins;
    for (let k = 0; k < b; k++) {
      re[k] = out[2 * k]!;
      im[k] = out[2 * k + 1]!;
    }
  }

  /**
   * Inverse transform of a Hermitian half spectrum to n real samples:
   * x[n] = (1/N) sum_k X[k] e^{+j 2 pi k n / N}. Uses one complex FFT of size N/2
   * (even samples in the real part, odd samples in the imaginary part).
   */
  inverse(re: Float64Array, im: Float64Array, out: Float64Array): void {
    const n = this.size;
    const m = n / 2;
    const z = this.halfIn;
    for (let k = 0; k < m; k++) {
      // E = (X[k] + conj X[M-k]) / 2, O = (X[k] - conj X[M-k]) / 2 * e^{+j2pik/N}, Z = E + jO.
      const ar = re[k]!;
      const ai = im[k]!;
      const br = re[m - k]!;
      const bi = -im[m - k]!;
      const er = 0.5 * (ar + br);
      const ei = 0.5 * (ai + bi);
      const dr = 0.5 * (ar - br);
      const di = 0.5 * (ai - bi);
      const c = this.twCos[k]!;
      const s = this.twSin[k]!;
      const or = dr * c - di * s;
      const oi = dr * s + di * c;
      // Z = E + j O; feed conj(Z) to a forward transform, conjugate back below.
      z[2 * k] = er - oi;
      z[2 * k + 1] = -(ei + or);
    }
    const w = this.halfOut;
    this.half.transform(w, z);
    const scale = 1 / m;
    for (let j = 0; j < m; j++) {
      out[2 * j] = w[2 * j]! * scale;
      out[2 * j + 1] = -w[2 * j + 1]! * scale;
    }
  }
}

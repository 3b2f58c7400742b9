import FFT from 'fft.js';
import { PFFFT_BACKWARD, PFFFT_FORWARD, pffft } from './pffft-backend.js';

/** A sample or spectrum buffer: a view into PFFFT's memory, or a plain array for fft.js. */
export type FftBuffer = Float32Array | number[];

/** Is n a power of two (and at least 4, as the FFT needs)? */
export function isPowerOfTwo(n: number): boolean {
  return Number.isInteger(n) && n >= 4 && (n & (n - 1)) === 0;
}

/**
 * Real FFT of a fixed size n (power of two) with preallocated buffers, on PFFFT (WebAssembly
 * SIMD) when it loads, else on fft.js. No allocation per call.
 * - forwardInterleaved: an input buffer from createInput() into a spectrum buffer from
 *   createSpectrum(), bin k (1 <= k < n/2) at [2k] (real) and [2k + 1] (imaginary);
 * - forward / inverse: half spectra (bins 0..n/2) as separate real and imaginary arrays.
 */
export class RealFft {
  /** Which FFT does the work. */
  readonly backend: 'pffft' | 'fft.js';
  private readonly pfSetup: number = 0;
  private readonly pfWork: { view: Float32Array; ptr: number } | null = null;
  private readonly pfIn: { view: Float32Array; ptr: number } | null = null;
  private readonly pfOut: { view: Float32Array; ptr: number } | null = null;
  /** Inverse input in PFFFT's layout; bins outside the bands written stay zero. */
  private readonly pfInv: { view: Float32Array; ptr: number } | null = null;
  /** Input and spectrum views and their pointers, by view. */
  private readonly pfPtr = new Map<Float32Array, number>();
  private released = false;
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

  /** `backend` 'fft.js' forces the double-precision fallback (tests, comparisons). */
  constructor(n: number, backend: 'auto' | 'fft.js' = 'auto') {
    if (!isPowerOfTwo(n) || n < 8) throw new Error(`FFT size ${n} must be a power of two of at least 8`);
    this.size = n;
    this.bins = n / 2 + 1;
    this.backend = pffft && n >= 32 && backend === 'auto' ? 'pffft' : 'fft.js';
    if (this.backend === 'pffft' && pffft) {
      this.pfSetup = pffft.setup(n);
      this.pfWork = pffft.alloc(n);
      this.pfIn = pffft.alloc(n);
      this.pfOut = pffft.alloc(n);
      this.pfInv = pffft.alloc(n);
      this.pfInv.view.fill(0);
    }
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

  /**
   * Give PFFFT's buffers back (this FFT's own and every one createInput / createSpectrum made):
   * after this neither the FFT nor those buffers may be used. Nothing to do on fft.js. For a
   * process that makes many analyses one after another; PFFFT's memory is a fixed arena.
   */
  release(): void {
    if (this.backend !== 'pffft' || !pffft || this.released) return;
    this.released = true;
    for (const b of [this.pfWork, this.pfIn, this.pfOut, this.pfInv]) if (b !== null) pffft.free(b.ptr, this.size);
    for (const ptr of this.pfPtr.values()) pffft.free(ptr, this.size);
    this.pfPtr.clear();
  }

  /** A buffer for an interleaved spectrum (bin k at [2k], [2k + 1] for 1 <= k < N/2). */
  createSpectrum(): FftBuffer {
    if (this.backend === 'pffft' && pffft) {
      const b = pffft.alloc(this.size);
      this.pfPtr.set(b.view, b.ptr);
      return b.view;
    }
    return this.full.createComplexArray() as number[];
  }

  /** A buffer of N samples for forwardInterleaved (a new one each call). */
  createInput(): FftBuffer {
    if (this.backend === 'pffft' && pffft) {
      const b = pffft.alloc(this.size);
      this.pfPtr.set(b.view, b.ptr);
      return b.view;
    }
    return new Array<number>(this.size).fill(0);
  }

  /** Forward transform of the input buffer into a spectrum buffer, with no copies. */
  forwardInterleaved(input: FftBuffer, spectrum: FftBuffer): void {
    if (this.backend === 'pffft') {
      const ptr = this.pfPtr.get(spectrum as Float32Array);
      const inPtr = this.pfPtr.get(input as Float32Array);
      if (ptr === undefined || inPtr === undefined || !pffft!.alive(input as Float32Array)) {
        throw new Error('RealFft: buffers must come from this FFT (createInput, createSpectrum)');
      }
      pffft!.module._pffft_transform_ordered(this.pfSetup, inPtr, ptr, this.pfWork!.ptr, PFFFT_FORWARD);
      return;
    }
    this.full.realTransform(spectrum as number[], input as number[]);
  }

  /** Forward transform: X[k] = sum_n x[n] e^{-j 2 pi k n / N}, k = 0..N/2. */
  forward(input: Float64Array, re: Float64Array, im: Float64Array): void {
    if (this.backend === 'pffft') {
      const x = this.pfIn!.view;
      for (let i = 0; i < this.size; i++) x[i] = input[i]!;
      const o = this.pfOut!;
      pffft!.module._pffft_transform_ordered(this.pfSetup, this.pfIn!.ptr, o.ptr, this.pfWork!.ptr, PFFFT_FORWARD);
      const v = o.view;
      re[0] = v[0]!;
      im[0] = 0;
      re[this.size / 2] = v[1]!;
      im[this.size / 2] = 0;
      for (let k = 1; k < this.size / 2; k++) {
        re[k] = v[2 * k]!;
        im[k] = v[2 * k + 1]!;
      }
      return;
    }
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
   * Inverse transform of bins [first, end) of a half spectrum (all other bins zero), each bin
   * scaled by `binScale[k]`, writing only the lags |lag| <= maxLag of the result (at index
   * lag mod N). The GCC needs no more: this saves the copies of the full transform.
   */
  inverseLags(re: Float64Array, im: Float64Array, binScale: Float64Array | null, first: number, end: number, out: Float64Array, maxLag: number): void {
    const n = this.size;
    if (this.backend !== 'pffft' || first < 1 || end > n / 2) {
      const sr = this.scratchRe ?? (this.scratchRe = new Float64Array(n / 2 + 1));
      const si = this.scratchIm ?? (this.scratchIm = new Float64Array(n / 2 + 1));
      sr.fill(0);
      si.fill(0);
      for (let k = first; k < end; k++) {
        const g = binScale ? binScale[k]! : 1;
        sr[k] = re[k]! * g;
        si[k] = im[k]! * g;
      }
      this.inverse(sr, si, out);
      return;
    }
    const v = this.pfInv!.view;
    if (binScale) {
      for (let k = first; k < end; k++) {
        const g = binScale[k]!;
        v[2 * k] = re[k]! * g;
        v[2 * k + 1] = im[k]! * g;
      }
    } else {
      for (let k = first; k < end; k++) {
        v[2 * k] = re[k]!;
        v[2 * k + 1] = im[k]!;
      }
    }
    const o = this.pfOut!;
    pffft!.module._pffft_transform_ordered(this.pfSetup, this.pfInv!.ptr, o.ptr, this.pfWork!.ptr, PFFFT_BACKWARD);
    this.readLags(o.view, out, maxLag);
  }

  /**
   * inverseLags from an input already scaled and packed as float32 (re, im) per bin, bins
   * [first, end) only: `packedBins` holds bin k at [2 (k - first)], [2 (k - first) + 1]
   * (GccKernels.scalePack, ./gcc-kernels.ts, then a view of those bins): the same transform and
   * output, on PFFFT only (and 1 <= first, end <= n/2).
   */
  inversePackedLags(packedBins: Float32Array, first: number, end: number, out: Float64Array, maxLag: number): void {
    const n = this.size;
    if (this.backend !== 'pffft' || first < 1 || end > n / 2 || packedBins.length !== 2 * (end - first)) throw new Error('RealFft.inversePackedLags needs PFFFT, bins within 1 .. n/2 and 2 (end - first) numbers');
    this.pfInv!.view.set(packedBins, 2 * first);
    const o = this.pfOut!;
    pffft!.module._pffft_transform_ordered(this.pfSetup, this.pfInv!.ptr, o.ptr, this.pfWork!.ptr, PFFFT_BACKWARD);
    this.readLags(o.view, out, maxLag);
  }

  /** The inverse transform's lags -L .. L (L = maxLag + 1, within the frame) from PFFFT's output, scaled by 1 / n. */
  private readLags(w: Float32Array, out: Float64Array, maxLag: number): void {
    const n = this.size;
    const scale = 1 / n;
    const L = Math.min(maxLag + 1, n / 2 - 1);
    for (let i = 0; i <= L; i++) out[i] = w[i]! * scale;
    for (let i = n - L; i < n; i++) out[i] = w[i]! * scale;
  }

  private scratchRe: Float64Array | null = null;
  private scratchIm: Float64Array | null = null;

  /**
   * Inverse transform of a Hermitian half spectrum to n real samples:
   * x[n] = (1/N) sum_k X[k] e^{+j 2 pi k n / N}. Uses one complex FFT of size N/2
   * (even samples in the real part, odd samples in the imaginary part).
   */
  inverse(re: Float64Array, im: Float64Array, out: Float64Array): void {
    const n = this.size;
    if (this.backend === 'pffft') {
      // PFFFT's ordered real layout: [X0, X(N/2), re1, im1, ...]; its inverse is unscaled.
      const v = this.pfIn!.view;
      v[0] = re[0]!;
      v[1] = re[n / 2]!;
      for (let k = 1; k < n / 2; k++) {
        v[2 * k] = re[k]!;
        v[2 * k + 1] = im[k]!;
      }
      const o = this.pfOut!;
      pffft!.module._pffft_transform_ordered(this.pfSetup, this.pfIn!.ptr, o.ptr, this.pfWork!.ptr, PFFFT_BACKWARD);
      const w = o.view;
      const scale = 1 / n;
      for (let i = 0; i < n; i++) out[i] = w[i]! * scale;
      return;
    }
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

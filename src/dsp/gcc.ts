import type { BandLayout } from './bands.js';
import type { RealFft } from './fft.js';

/**
 * GCC-PHAT for one mic pair (Knapp and Carter 1976), with an onset-weighted memory:
 *   A_k <- memory * A_k + w_k * conj(X_a,k) X_b,k / |X_a,k X_b,k|
 * so that the correlation peaks at the lag tdoa = t_b - t_a (samples).
 * The correlation as a continuous function of the lag tau is
 *   r(tau) = sum_k Re(A_k e^{j 2 pi k tau / N})   over the analysis bins,
 * which the band scores and the sub-sample refinement evaluate exactly (no interpolation bias).
 */
export class PairCorrelator {
  /** Accumulated PHAT cross-spectrum (real and imaginary parts), analysis bins only. */
  readonly accRe: Float64Array;
  readonly accIm: Float64Array;
  /** Correlation over integer lags from the inverse FFT (index lag mod N). */
  readonly gcc: Float64Array;

  /** `storage`: the accumulator arrays (n / 2 + 1 each) when they must live elsewhere (the WebAssembly kernels' memory, ./gcc-kernels.ts). */
  constructor(
    readonly n: number,
    readonly maxLag: number,
    storage?: { accRe: Float64Array; accIm: Float64Array },
  ) {
    const bins = n / 2 + 1;
    this.accRe = storage?.accRe ?? new Float64Array(bins);
    this.accIm = storage?.accIm ?? new Float64Array(bins);
    this.gcc = new Float64Array(n);
  }

  /**
   * Add this hop's PHAT-weighted cross-spectrum into the memory (spectra interleaved re, im):
   *   A_k <- memory * A_k + conj(X_a,k) X_b,k * weightedInvA[k] * invB[k]
   * with invB = 1 / |X_b| per bin (0 for an empty bin) and weightedInvA = the bin's weight times
   * 1 / |X_a| (formed once per channel by the caller, so that an array's pairs share it; plain
   * 1 / |X_a| for unweighted GCC-PHAT).
   */
  accumulate(a: ArrayLike<number>, b: ArrayLike<number>, weightedInvA: Float64Array, invB: Float64Array, first: number, end: number, memory: number): void {
    const ar = this.accRe;
    const ai = this.accIm;
    for (let k = first; k < end; k++) {
      const xr = a[2 * k]!;
      const xi = a[2 * k + 1]!;
      const yr = b[2 * k]!;
      const yi = b[2 * k + 1]!;
      const g = weightedInvA[k]! * invB[k]!;
      ar[k] = memory * ar[k]! + (xr * yr + xi * yi) * g;
      ai[k] = memory * ai[k]! + (xr * yi - xi * yr) * g;
    }
  }

  /** Inverse FFT of the accumulated cross-spectrum (bins [first, end)) into `gcc`, lags within maxLag. */
  correlate(fft: RealFft, first: number, end: number): void {
    fft.inverseLags(this.accRe, this.accIm, null, first, end, this.gcc, this.maxLag + 1);
  }

  /**
   * The same with each bin scaled by `binScale[k]` (e.g. 1 / its band's total weight, so that
   * every band has the same say whatever its width).
   */
  correlateScaled(fft: RealFft, binScale: Float64Array, first: number, end: number): void {
    fft.inverseLags(this.accRe, this.accIm, binScale, first, end, this.gcc, this.maxLag + 1);
  }

  /** Correlation at an integer lag (may be negative). */
  at(lag: number): number {
    const n = this.n;
    return this.gcc[((lag % n) + n) % n]!;
  }

  /**
   * Find up to `count` local maxima of the correlation within |lag| <= maxLag, best first,
   * each refined by a parabola through its three integer neighbours. Writes lags and heights,
   * returns how many were found.
   */
  peaks(count: number, lagsOut: Float64Array, heightsOut: Float64Array): number {
    const L = this.maxLag;
    const g = this.gcc;
    const n = this.n;
    let found = 0;
    // lag l sits at index l mod N (l + N for l < 0; the window is far inside the frame); one new
    // value a lag, the three neighbours rolled along
    let yl = g[n - L - 1]!;
    let y = g[n - L]!;
    let yr = y;
    for (let lag = -L; lag <= L; yl = y, y = yr, lag++) {
      const next = lag + 1;
      yr = g[next < 0 ? n + next : next]!;
      if (!(y > yl && y >= yr)) continue;
      if (found === count && y <= heightsOut[found - 1]!) continue;
      // insertion into the sorted top list
      let pos = found < count ? found : count - 1;
      while (pos > 0 && heightsOut[pos - 1]! < y) {
        lagsOut[pos] = lagsOut[pos - 1]!;
        heightsOut[pos] = heightsOut[pos - 1]!;
        pos--;
      }
      const den = yl - 2 * y + yr;
      const delta = den < 0 ? Math.max(-0.5, Math.min(0.5, (0.5 * (yl - yr)) / den)) : 0;
      lagsOut[pos] = lag + delta;
      heightsOut[pos] = y;
      if (found < count) found++;
    }
    return found;
  }
}

/**
 * Band scores of a pair at a (fractional) lag: for each band b,
 *   sum_{k in b} Re(A_k e^{j 2 pi k tau / N})
 * added into scoresOut[b * stride + offset]. One pass over the analysis bins with a phasor
 * recursion; no allocation.
 */
export function addBandScores(
  pc: PairCorrelator,
  bands: BandLayout,
  lag: number,
  scoresOut: Float64Array,
  stride: number,
  offset: number,
): void {
  const step = (2 * Math.PI * lag) / pc.n;
  const sr = Math.cos(step);
  const si = Math.sin(step);
  const k0 = bands.firstBin;
  let pr = Math.cos(step * k0);
  let pi = Math.sin(step * k0);
  const ar = pc.accRe;
  const ai = pc.accIm;
  let k = k0;
  for (let b = 0; b < bands.count; b++) {
    const e = bands.end[b]!;
    let acc = 0;
    for (; k < e; k++) {
      acc += ar[k]! * pr - ai[k]! * pi;
      const t = pr * sr - pi * si;
      pi = pr * si + pi * sr;
      pr = t;
    }
    scoresOut[b * stride + offset] = scoresOut[b * stride + offset]! + acc;
  }
}

/**
 * Sub-sample refinement: Newton steps on r(tau) restricted to the bands whose flag is set,
 * starting at `lag`. Exact derivatives of the continuous correlation, so there is no
 * parabolic-interpolation bias. Returns the refined lag, kept within +-1 sample of the start
 * and within +-maxLag.
 */
export function refineLag(pc: PairCorrelator, bands: BandLayout, useBand: Uint8Array, lag: number, iterations = 2): number {
  const n = pc.n;
  const w0 = (2 * Math.PI) / n;
  const ar = pc.accRe;
  const ai = pc.accIm;
  let tau = lag;
  for (let it = 0; it < iterations; it++) {
    let d1 = 0;
    let d2 = 0;
    const step = w0 * tau;
    const sr = Math.cos(step);
    const si = Math.sin(step);
    let pr = 0;
    let pi = 0;
    for (let b = 0; b < bands.count; b++) {
      if (!useBand[b]) continue;
      const s = bands.start[b]!;
      const e = bands.end[b]!;
      if (b === 0 || !useBand[b - 1]) {
        // the first band of a run of used bands; within a run the phasor steps on
        pr = Math.cos(step * s);
        pi = Math.sin(step * s);
      }
      for (let k = s; k < e; k++) {
        const w = w0 * k;
        const re = ar[k]! * pr - ai[k]! * pi;
        const im = ar[k]! * pi + ai[k]! * pr;
        d1 -= w * im;
        d2 -= w * w * re;
        const t = pr * sr - pi * si;
        pi = pr * si + pi * sr;
        pr = t;
      }
    }
    if (!(d2 < 0)) break;
    let delta = -d1 / d2;
    if (delta > 0.5) delta = 0.5;
    else if (delta < -0.5) delta = -0.5;
    tau += delta;
    if (Math.abs(delta) < 1e-5) break;
  }
  if (tau > lag + 1) tau = lag + 1;
  if (tau < lag - 1) tau = lag - 1;
  const L = pc.maxLag;
  return Math.max(-L, Math.min(L, tau));
}

/** 1 / |X_k| of an interleaved spectrum for bins [first, end) (0 for an empty bin), for PHAT. */
export function inverseMagnitudes(spectrum: ArrayLike<number>, first: number, end: number, out: Float64Array): void {
  for (let k = first; k < end; k++) {
    const r = spectrum[2 * k]!;
    const i = spectrum[2 * k + 1]!;
    const p2 = r * r + i * i;
    out[k] = p2 > 1e-30 ? 1 / Math.sqrt(p2) : 0;
  }
}

/**
 * One bin's unit cross-spectrum conj(X_a,k) X_b,k / (|X_a,k| |X_b,k|) (the convention of the pair
 * memories; 0 for an empty bin, through invA / invB) from the hop's own spectra, into re[at] and
 * im[at]: the bins the analysis reads one by one (its rising bins, the watched directions' bins).
 */
export function unitCrossInto(a: ArrayLike<number>, b: ArrayLike<number>, invA: Float64Array, invB: Float64Array, k: number, re: Float64Array, im: Float64Array, at: number): void {
  const xr = a[2 * k]!;
  const xi = a[2 * k + 1]!;
  const yr = b[2 * k]!;
  const yi = b[2 * k + 1]!;
  const g = invA[k]! * invB[k]!;
  re[at] = (xr * yr + xi * yi) * g;
  im[at] = (xr * yi - xi * yr) * g;
}

/**
 * Coherence of this hop alone with a lag, summed over the bins [first, end) (one phasor
 * recursion from `first`; 0 for no bins) of
 *   Re(conj(X_a) X_b / |X_a X_b| e^{j 2 pi k lag / N})
 * from the hop's own spectra (no memory, no weights). Its mean over the bins is near 1 when a
 * source at that lag sounds now, near 0 (within about 1 / sqrt(bins)) when the hop holds only
 * incoherent noise, so it tells a sounding source from the memory of one that has stopped. The
 * analysis computes it in float32 lanes (./gcc-lanes.ts: hopCoherenceF32 for a pair alone,
 * hopCoherenceLanes four pairs at once); this double-precision sum is their reference in tests.
 */
export function coherenceSum(a: ArrayLike<number>, b: ArrayLike<number>, invA: Float64Array, invB: Float64Array, n: number, lag: number, first: number, end: number): number {
  const step = (2 * Math.PI * lag) / n;
  const sr = Math.cos(step);
  const si = Math.sin(step);
  let pr = Math.cos(step * first);
  let pi = Math.sin(step * first);
  let acc = 0;
  for (let k = first; k < end; k++) {
    const xr = a[2 * k]!;
    const xi = a[2 * k + 1]!;
    const yr = b[2 * k]!;
    const yi = b[2 * k + 1]!;
    const g = invA[k]! * invB[k]!;
    acc += ((xr * yr + xi * yi) * pr - (xr * yi - xi * yr) * pi) * g;
    const t = pr * sr - pi * si;
    pi = pr * si + pi * sr;
    pr = t;
  }
  return acc;
}

import type { BandLayout } from './bands.js';
import type { PairCorrelator } from './gcc.js';

/**
 * Interleaved forms of the kernels of ./gcc.ts: several independent evaluations in one pass
 * over the bins. Each evaluation is a phasor recursion whose steps wait on one another (a
 * complex multiply per bin); run side by side, the processor overlaps them. Every lane does
 * exactly the arithmetic of the single kernel in the same order, so the results are
 * bit-identical to it (JavaScript has no fused multiply-add): only the time changes.
 */

/**
 * The band scores of one pair at `count` lags lags[lagOffset + i * lagStride], added into
 * scoresOut[b * stride + offset + i] for i < count: addBandScores (./gcc.ts) in float32, four
 * lags per pass (GccKernels.addBandScores, ./gcc-kernels.ts, runs the same lanes in WebAssembly
 * SIMD, bit for bit). Each lane's phasor step and start are computed in double precision and
 * rounded once (setPhasorsF32); every product, sum and phasor step after that is rounded to
 * float32, and each band's sum is added to its score in double precision. Band scores weigh
 * bands against each other (a few per cent decide), so float32 costs nothing there (relative
 * error near 1e-6 over a band; test/dsp/gcc-lanes.test.ts bounds it) and doubles the lanes a
 * SIMD instruction holds. Bands whose `needed[b]` is not above 0 are left as they are (their
 * phasors still step through them); give null to score every band.
 */
export function addBandScoresLanes(
  pc: PairCorrelator,
  bands: BandLayout,
  lags: Float64Array,
  lagOffset: number,
  lagStride: number,
  count: number,
  scoresOut: Float64Array,
  stride: number,
  offset: number,
  needed: Float64Array | null = null,
): void {
  for (let i = 0; i < count; i += 4) {
    const w = Math.min(4, count - i);
    setPhasorsF32(laneScratch, 0, lags, lagOffset + i * lagStride, lagStride, w, pc.n, bands.firstBin);
    bandScoresF32(pc, bands, laneScratch, scoresOut, stride, offset + i, w, needed);
  }
}

const laneScratch = new Float32Array(16);

/**
 * Float32 phasors for `w` (1 .. 4) lags lags[at + i * step] into ph[first ..]: the steps
 * e^{j 2 pi lag / n} (real parts, then imaginary), then the phasors at bin k0, four lanes each,
 * computed in double precision and rounded once; spare lanes repeat the last lag.
 */
export function setPhasorsF32(ph: Float32Array, first: number, lags: Float64Array, at: number, step: number, w: number, n: number, k0: number): void {
  for (let i = 0; i < 4; i++) {
    const s = (2 * Math.PI * lags[at + Math.min(i, w - 1) * step]!) / n;
    ph[first + i] = Math.cos(s);
    ph[first + 4 + i] = Math.sin(s);
    ph[first + 8 + i] = Math.cos(s * k0);
    ph[first + 12 + i] = Math.sin(s * k0);
  }
}

/** Four float32 lanes of band scores from the phasors in ph[0 .. 16) (setPhasorsF32); lanes below `write` are added. */
function bandScoresF32(pc: PairCorrelator, bands: BandLayout, ph: Float32Array, out: Float64Array, stride: number, offset: number, write: number, needed: Float64Array | null): void {
  const f = Math.fround;
  const sr0 = ph[0]!, sr1 = ph[1]!, sr2 = ph[2]!, sr3 = ph[3]!;
  const si0 = ph[4]!, si1 = ph[5]!, si2 = ph[6]!, si3 = ph[7]!;
  let pr0 = ph[8]!, pr1 = ph[9]!, pr2 = ph[10]!, pr3 = ph[11]!;
  let pi0 = ph[12]!, pi1 = ph[13]!, pi2 = ph[14]!, pi3 = ph[15]!;
  const ar = pc.accRe;
  const ai = pc.accIm;
  const end = bands.end;
  let k = bands.firstBin;
  for (let b = 0; b < bands.count; b++) {
    const e = end[b]!;
    const use = needed === null || needed[b]! > 0;
    let a0 = 0, a1 = 0, a2 = 0, a3 = 0;
    for (; k < e; k++) {
      if (use) {
        const re = f(ar[k]!);
        const im = f(ai[k]!);
        a0 = f(a0 + f(f(re * pr0) - f(im * pi0)));
        a1 = f(a1 + f(f(re * pr1) - f(im * pi1)));
        a2 = f(a2 + f(f(re * pr2) - f(im * pi2)));
        a3 = f(a3 + f(f(re * pr3) - f(im * pi3)));
      }
      const t0 = f(f(pr0 * sr0) - f(pi0 * si0));
      pi0 = f(f(pr0 * si0) + f(pi0 * sr0));
      pr0 = t0;
      const t1 = f(f(pr1 * sr1) - f(pi1 * si1));
      pi1 = f(f(pr1 * si1) + f(pi1 * sr1));
      pr1 = t1;
      const t2 = f(f(pr2 * sr2) - f(pi2 * si2));
      pi2 = f(f(pr2 * si2) + f(pi2 * sr2));
      pr2 = t2;
      const t3 = f(f(pr3 * sr3) - f(pi3 * si3));
      pi3 = f(f(pr3 * si3) + f(pi3 * sr3));
      pr3 = t3;
    }
    if (!use) continue;
    const o = b * stride + offset;
    out[o] = out[o]! + a0;
    if (write > 1) out[o + 1] = out[o + 1]! + a1;
    if (write > 2) out[o + 2] = out[o + 2]! + a2;
    if (write > 3) out[o + 3] = out[o + 3]! + a3;
  }
}

/**
 * refineLag (./gcc.ts) for several pairs at once: pair p of `pcs` from lagsIn[lagOffset + p]
 * into lagsOut[p], on the same bands, with the same Newton steps and stopping rules per pair.
 * `d` is scratch of at least 2 * pcs.length numbers; `active` of pcs.length.
 */
export function refineLagLanes(
  pcs: readonly PairCorrelator[],
  bands: BandLayout,
  useBand: Uint8Array,
  lagsIn: Float64Array,
  lagOffset: number,
  lagsOut: Float64Array,
  d: Float64Array,
  active: Uint8Array,
  iterations = 2,
): void {
  const P = pcs.length;
  startNewton(P, lagsIn, lagOffset, lagsOut, active);
  for (let it = 0; it < iterations; it++) {
    // The active pairs two at a time (an odd one alone).
    let pending = -1;
    for (let p = 0; p < P; p++) {
      if (!active[p]) continue;
      if (pending < 0) {
        pending = p;
        continue;
      }
      derivatives2(pcs[pending]!, pcs[p]!, bands, useBand, lagsOut[pending]!, lagsOut[p]!, d, 2 * pending, 2 * p);
      pending = -1;
    }
    if (pending >= 0) derivatives1(pcs[pending]!, bands, useBand, lagsOut[pending]!, d, 2 * pending);
    if (!newtonStep(P, d, active, lagsOut)) break;
  }
  clampToStart(pcs, lagsIn, lagOffset, lagsOut);
}

/** Newton refinement of several pairs' lags, shared by refineLagLanes and the WebAssembly kernels' refineLags: every pair starts active at its lag. */
export function startNewton(P: number, lagsIn: Float64Array, lagOffset: number, lagsOut: Float64Array, active: Uint8Array): void {
  for (let p = 0; p < P; p++) {
    lagsOut[p] = lagsIn[lagOffset + p]!;
    active[p] = 1;
  }
}

/**
 * One Newton step per active pair from its derivatives d[2p] (first) and d[2p + 1] (second):
 * a pair stops at a non-negative curvature or a step under 1e-5 sample; steps are capped at half
 * a sample. Returns whether any pair is still active.
 */
export function newtonStep(P: number, d: Float64Array, active: Uint8Array, lagsOut: Float64Array): boolean {
  let any = false;
  for (let p = 0; p < P; p++) {
    if (!active[p]) continue;
    const d1 = d[2 * p]!;
    const d2 = d[2 * p + 1]!;
    if (!(d2 < 0)) {
      active[p] = 0;
      continue;
    }
    let delta = -d1 / d2;
    if (delta > 0.5) delta = 0.5;
    else if (delta < -0.5) delta = -0.5;
    lagsOut[p] = lagsOut[p]! + delta;
    if (Math.abs(delta) < 1e-5) active[p] = 0;
    else any = true;
  }
  return any;
}

/** The last band of the run of used bands that starts at band b (bands are contiguous, so a run is one range of bins). */
export function lastOfUsedRun(useBand: Uint8Array, count: number, b: number): number {
  let last = b;
  while (last + 1 < count && useBand[last + 1]) last++;
  return last;
}

/** Each refined lag kept within a sample of where it started and within its pair's lag window. */
export function clampToStart(pcs: readonly { readonly maxLag: number }[], lagsIn: Float64Array, lagOffset: number, lagsOut: Float64Array): void {
  for (let p = 0; p < pcs.length; p++) {
    const lag = lagsIn[lagOffset + p]!;
    let tau = lagsOut[p]!;
    if (tau > lag + 1) tau = lag + 1;
    if (tau < lag - 1) tau = lag - 1;
    const L = pcs[p]!.maxLag;
    lagsOut[p] = Math.max(-L, Math.min(L, tau));
  }
}

/**
 * derivatives2 for one pair alone (a pair array, or the odd pair out): per run of used bands
 * (the bands are contiguous), bin k in lane 0 and bin k + 1 in lane 1, the phasors stepping two
 * bins at a time, an odd last bin in lane 0 alone; the lanes added at the end. The WebAssembly
 * kernel (gcc-kernels.wat, derivatives1) does the same sums in the same order.
 */
function derivatives1(pa: PairCorrelator, bands: BandLayout, useBand: Uint8Array, ta: number, d: Float64Array, oa: number): void {
  const w0 = (2 * Math.PI) / pa.n;
  const ar = pa.accRe;
  const ai = pa.accIm;
  const step = w0 * ta;
  const sr = Math.cos(2 * step);
  const si = Math.sin(2 * step);
  let d1a = 0;
  let d2a = 0;
  let d1b = 0;
  let d2b = 0;
  for (let b = 0; b < bands.count; b++) {
    if (!useBand[b]) continue;
    const last = lastOfUsedRun(useBand, bands.count, b);
    const k0 = bands.start[b]!;
    const k1 = bands.end[last]!;
    let prA = Math.cos(step * k0);
    let prB = Math.cos(step * (k0 + 1));
    let piA = Math.sin(step * k0);
    let piB = Math.sin(step * (k0 + 1));
    let k = k0;
    for (; k + 2 <= k1; k += 2) {
      const wa = w0 * k;
      const wb = wa + w0;
      const xa = ar[k]!;
      const ya = ai[k]!;
      const xb = ar[k + 1]!;
      const yb = ai[k + 1]!;
      d1a -= wa * (xa * piA + ya * prA);
      d1b -= wb * (xb * piB + yb * prB);
      d2a -= wa * wa * (xa * prA - ya * piA);
      d2b -= wb * wb * (xb * prB - yb * piB);
      const ta2 = prA * sr - piA * si;
      piA = prA * si + piA * sr;
      prA = ta2;
      const tb2 = prB * sr - piB * si;
      piB = prB * si + piB * sr;
      prB = tb2;
    }
    if (k < k1) {
      const wa = w0 * k;
      const xa = ar[k]!;
      const ya = ai[k]!;
      d1a -= wa * (xa * piA + ya * prA);
      d2a -= wa * wa * (xa * prA - ya * piA);
    }
    b = last;
  }
  d[oa] = d1a + d1b;
  d[oa + 1] = d2a + d2b;
}

/** First and second derivative of two pairs' correlations at their lags over the used bands, into d[oa], d[oa + 1] and d[ob], d[ob + 1]. */
function derivatives2(pa: PairCorrelator, pb: PairCorrelator, bands: BandLayout, useBand: Uint8Array, ta: number, tb: number, d: Float64Array, oa: number, ob: number): void {
  const w0 = (2 * Math.PI) / pa.n;
  const arA = pa.accRe;
  const aiA = pa.accIm;
  const arB = pb.accRe;
  const aiB = pb.accIm;
  let d1a = 0;
  let d2a = 0;
  let d1b = 0;
  let d2b = 0;
  const stepA = w0 * ta;
  const stepB = w0 * tb;
  const srA = Math.cos(stepA);
  const siA = Math.sin(stepA);
  const srB = Math.cos(stepB);
  const siB = Math.sin(stepB);
  let prA = 0;
  let piA = 0;
  let prB = 0;
  let piB = 0;
  for (let b = 0; b < bands.count; b++) {
    if (!useBand[b]) continue;
    const s = bands.start[b]!;
    const e = bands.end[b]!;
    if (b === 0 || !useBand[b - 1]) {
      // the first band of a run of used bands; within a run the phasor steps on
      prA = Math.cos(stepA * s);
      piA = Math.sin(stepA * s);
      prB = Math.cos(stepB * s);
      piB = Math.sin(stepB * s);
    }
    for (let k = s; k < e; k++) {
      const w = w0 * k;
      const ww = w * w;
      const xa = arA[k]!;
      const ya = aiA[k]!;
      const xb = arB[k]!;
      const yb = aiB[k]!;
      d1a -= w * (xa * piA + ya * prA);
      d2a -= ww * (xa * prA - ya * piA);
      d1b -= w * (xb * piB + yb * prB);
      d2b -= ww * (xb * prB - yb * piB);
      const ta2 = prA * srA - piA * siA;
      piA = prA * siA + piA * srA;
      prA = ta2;
      const tb2 = prB * srB - piB * siB;
      piB = prB * siB + piB * srB;
      prB = tb2;
    }
  }
  d[oa] = d1a;
  d[oa + 1] = d2a;
  d[ob] = d1b;
  d[ob + 1] = d2b;
}

/**
 * The layout of unit spectra with the channels side by side, for the hop coherence of many
 * pairs (hopCoherenceLanes): per bin, the real parts of X_c / |X_c| for channels 0 .. 4 nv - 1,
 * then their imaginary parts (float32), nv = ceil(channels / 4) vectors of four channels each.
 */
export interface UnitLayout {
  /** Vectors of four channels per part. */
  readonly nv: number;
  /** Floats per bin (8 nv). */
  readonly stride: number;
  /** Offset of the imaginary parts within a bin, floats (4 nv). */
  readonly half: number;
}

export function unitLayout(channels: number): UnitLayout {
  const nv = Math.ceil(channels / 4);
  return { nv, stride: 8 * nv, half: 4 * nv };
}

/**
 * Channel c's unit spectrum over bins [k0, k1) into `ut` (UnitLayout): the real and imaginary
 * parts of bin k times invMag[k], each rounded to float32 (GccKernels.unitT does the same).
 */
export function fillUnitSpectrum(spec: ArrayLike<number>, invMag: Float64Array, ut: Float32Array, c: number, layout: UnitLayout, k0: number, k1: number): void {
  const { stride, half } = layout;
  for (let k = k0; k < k1; k++) {
    const g = invMag[k]!;
    ut[k * stride + c] = spec[2 * k]! * g;
    ut[k * stride + half + c] = spec[2 * k + 1]! * g;
  }
}

/**
 * The hop coherence (./gcc.ts, coherenceSum: sum over bins [k0, k1) of Re(U_a conj(U_b)
 * e^{j 2 pi k lag / n})) of four pairs at once in float32, one pair per lane, from unit spectra
 * (fillUnitSpectrum). Lane i is pair (chans[at + i], chans[at + 4 + i]); ph holds the float32
 * phasors of its lag (setPhasorsF32 from bin k0). Every operation is rounded to float32, in the
 * order of GccKernels.hopCoherenceT's f32x4 lanes, so both give the same sums bit for bit; the
 * four sums go to out[0 .. 4). The coherence is a confidence feature (a mean over hundreds of
 * bins of terms within +-1): float32 keeps it to about 1e-6.
 */
export function hopCoherenceLanes(ut: Float32Array, layout: UnitLayout, chans: Int32Array, at: number, ph: Float32Array, k0: number, k1: number, out: Float32Array): void {
  const f = Math.fround;
  const { stride, half } = layout;
  for (let i = 0; i < 4; i++) {
    const a = chans[at + i]!;
    const b = chans[at + 4 + i]!;
    const sr = ph[i]!;
    const si = ph[4 + i]!;
    let pr = ph[8 + i]!;
    let pi = ph[12 + i]!;
    let acc = 0;
    for (let k = k0; k < k1; k++) {
      const o = k * stride;
      const ar = ut[o + a]!;
      const ai = ut[o + half + a]!;
      const br = ut[o + b]!;
      const bi = ut[o + half + b]!;
      const cr = f(f(ar * br) + f(ai * bi));
      const ci = f(f(ar * bi) - f(ai * br));
      acc = f(acc + f(f(cr * pr) - f(ci * pi)));
      const t = f(f(pr * sr) - f(pi * si));
      pi = f(f(pr * si) + f(pi * sr));
      pr = t;
    }
    out[i] = acc;
  }
}

import type { BandLayout } from './bands.js';
import { addBandScores, type PairCorrelator } from './gcc.js';

/**
 * Interleaved forms of the kernels of ./gcc.ts: several independent evaluations in one pass
 * over the bins. Each evaluation is a phasor recursion whose steps wait on one another (a
 * complex multiply per bin); run side by side, the processor overlaps them. Every lane does
 * exactly the arithmetic of the single kernel in the same order, so the results are
 * bit-identical to it (JavaScript has no fused multiply-add): only the time changes.
 */

/**
 * addBandScores (./gcc.ts) of one pair at `count` lags lags[lagOffset + i * lagStride],
 * added into scoresOut[b * stride + offset + i] for i < count. Bands whose `needed[b]` is not
 * above 0 are left as they are (their phasors still step through them, so the other bands'
 * sums are the same to the last bit); give null to score every band.
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
  let i = 0;
  for (; i + 4 <= count; i += 4) {
    const o = lagOffset + i * lagStride;
    bandScores4(pc, bands, lags[o]!, lags[o + lagStride]!, lags[o + 2 * lagStride]!, lags[o + 3 * lagStride]!, scoresOut, stride, offset + i, needed);
  }
  for (; i + 2 <= count; i += 2) {
    const o = lagOffset + i * lagStride;
    bandScores2(pc, bands, lags[o]!, lags[o + lagStride]!, scoresOut, stride, offset + i, needed);
  }
  if (i < count) {
    if (needed === null) addBandScores(pc, bands, lags[lagOffset + i * lagStride]!, scoresOut, stride, offset + i);
    else bandScores2(pc, bands, lags[lagOffset + i * lagStride]!, lags[lagOffset + i * lagStride]!, scoresOut, stride, offset + i, needed, true);
  }
}

function bandScores4(pc: PairCorrelator, bands: BandLayout, l0: number, l1: number, l2: number, l3: number, out: Float64Array, stride: number, offset: number, needed: Float64Array | null): void {
  const n = pc.n;
  const k0 = bands.firstBin;
  const s0 = (2 * Math.PI * l0) / n;
  const s1 = (2 * Math.PI * l1) / n;
  const s2 = (2 * Math.PI * l2) / n;
  const s3 = (2 * Math.PI * l3) / n;
  const sr0 = Math.cos(s0);
  const si0 = Math.sin(s0);
  const sr1 = Math.cos(s1);
  const si1 = Math.sin(s1);
  const sr2 = Math.cos(s2);
  const si2 = Math.sin(s2);
  const sr3 = Math.cos(s3);
  const si3 = Math.sin(s3);
  let pr0 = Math.cos(s0 * k0);
  let pi0 = Math.sin(s0 * k0);
  let pr1 = Math.cos(s1 * k0);
  let pi1 = Math.sin(s1 * k0);
  let pr2 = Math.cos(s2 * k0);
  let pi2 = Math.sin(s2 * k0);
  let pr3 = Math.cos(s3 * k0);
  let pi3 = Math.sin(s3 * k0);
  const ar = pc.accRe;
  const ai = pc.accIm;
  const end = bands.end;
  let k = k0;
  for (let b = 0; b < bands.count; b++) {
    const e = end[b]!;
    if (needed !== null && !(needed[b]! > 0)) {
      for (; k < e; k++) {
        const t0 = pr0 * sr0 - pi0 * si0;
        pi0 = pr0 * si0 + pi0 * sr0;
        pr0 = t0;
        const t1 = pr1 * sr1 - pi1 * si1;
        pi1 = pr1 * si1 + pi1 * sr1;
        pr1 = t1;
        const t2 = pr2 * sr2 - pi2 * si2;
        pi2 = pr2 * si2 + pi2 * sr2;
        pr2 = t2;
        const t3 = pr3 * sr3 - pi3 * si3;
        pi3 = pr3 * si3 + pi3 * sr3;
        pr3 = t3;
      }
      continue;
    }
    let a0 = 0;
    let a1 = 0;
    let a2 = 0;
    let a3 = 0;
    for (; k < e; k++) {
      const re = ar[k]!;
      const im = ai[k]!;
      a0 += re * pr0 - im * pi0;
      a1 += re * pr1 - im * pi1;
      a2 += re * pr2 - im * pi2;
      a3 += re * pr3 - im * pi3;
      const t0 = pr0 * sr0 - pi0 * si0;
      pi0 = pr0 * si0 + pi0 * sr0;
      pr0 = t0;
      const t1 = pr1 * sr1 - pi1 * si1;
      pi1 = pr1 * si1 + pi1 * sr1;
      pr1 = t1;
      const t2 = pr2 * sr2 - pi2 * si2;
      pi2 = pr2 * si2 + pi2 * sr2;
      pr2 = t2;
      const t3 = pr3 * sr3 - pi3 * si3;
      pi3 = pr3 * si3 + pi3 * sr3;
      pr3 = t3;
    }
    const o = b * stride + offset;
    out[o] = out[o]! + a0;
    out[o + 1] = out[o + 1]! + a1;
    out[o + 2] = out[o + 2]! + a2;
    out[o + 3] = out[o + 3]! + a3;
  }
}

/** Two lanes; `single` writes only the first (the second lane then repeats it). */
function bandScores2(pc: PairCorrelator, bands: BandLayout, l0: number, l1: number, out: Float64Array, stride: number, offset: number, needed: Float64Array | null, single = false): void {
  const n = pc.n;
  const k0 = bands.firstBin;
  const s0 = (2 * Math.PI * l0) / n;
  const s1 = (2 * Math.PI * l1) / n;
  const sr0 = Math.cos(s0);
  const si0 = Math.sin(s0);
  const sr1 = Math.cos(s1);
  const si1 = Math.sin(s1);
  let pr0 = Math.cos(s0 * k0);
  let pi0 = Math.sin(s0 * k0);
  let pr1 = Math.cos(s1 * k0);
  let pi1 = Math.sin(s1 * k0);
  const ar = pc.accRe;
  const ai = pc.accIm;
  const end = bands.end;
  let k = k0;
  for (let b = 0; b < bands.count; b++) {
    const e = end[b]!;
    if (needed !== null && !(needed[b]! > 0)) {
      for (; k < e; k++) {
        const t0 = pr0 * sr0 - pi0 * si0;
        pi0 = pr0 * si0 + pi0 * sr0;
        pr0 = t0;
        const t1 = pr1 * sr1 - pi1 * si1;
        pi1 = pr1 * si1 + pi1 * sr1;
        pr1 = t1;
      }
      continue;
    }
    let a0 = 0;
    let a1 = 0;
    for (; k < e; k++) {
      const re = ar[k]!;
      const im = ai[k]!;
      a0 += re * pr0 - im * pi0;
      a1 += re * pr1 - im * pi1;
      const t0 = pr0 * sr0 - pi0 * si0;
      pi0 = pr0 * si0 + pi0 * sr0;
      pr0 = t0;
      const t1 = pr1 * sr1 - pi1 * si1;
      pi1 = pr1 * si1 + pi1 * sr1;
      pr1 = t1;
    }
    const o = b * stride + offset;
    out[o] = out[o]! + a0;
    if (!single) out[o + 1] = out[o + 1]! + a1;
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
 * coherenceSum (./gcc.ts) of two pairs (spectra a0, b0 at lag0 and a1, b1 at lag1) over the
 * same bins, divided by their count, into out[0] and out[1] (hopCoherence's mean, each pair's
 * bins in one recursion).
 */
export function hopCoherence2(
  a0: ArrayLike<number>,
  b0: ArrayLike<number>,
  invA0: Float64Array,
  invB0: Float64Array,
  lag0: number,
  a1: ArrayLike<number>,
  b1: ArrayLike<number>,
  invA1: Float64Array,
  invB1: Float64Array,
  lag1: number,
  n: number,
  first: number,
  end: number,
  out: Float64Array,
): void {
  if (end <= first) {
    out[0] = 0;
    out[1] = 0;
    return;
  }
  const s0 = (2 * Math.PI * lag0) / n;
  const s1 = (2 * Math.PI * lag1) / n;
  const sr0 = Math.cos(s0);
  const si0 = Math.sin(s0);
  const sr1 = Math.cos(s1);
  const si1 = Math.sin(s1);
  let pr0 = Math.cos(s0 * first);
  let pi0 = Math.sin(s0 * first);
  let pr1 = Math.cos(s1 * first);
  let pi1 = Math.sin(s1 * first);
  let acc0 = 0;
  let acc1 = 0;
  for (let k = first; k < end; k++) {
    const xr0 = a0[2 * k]!;
    const xi0 = a0[2 * k + 1]!;
    const yr0 = b0[2 * k]!;
    const yi0 = b0[2 * k + 1]!;
    const g0 = invA0[k]! * invB0[k]!;
    acc0 += ((xr0 * yr0 + xi0 * yi0) * pr0 - (xr0 * yi0 - xi0 * yr0) * pi0) * g0;
    const xr1 = a1[2 * k]!;
    const xi1 = a1[2 * k + 1]!;
    const yr1 = b1[2 * k]!;
    const yi1 = b1[2 * k + 1]!;
    const g1 = invA1[k]! * invB1[k]!;
    acc1 += ((xr1 * yr1 + xi1 * yi1) * pr1 - (xr1 * yi1 - xi1 * yr1) * pi1) * g1;
    const t0 = pr0 * sr0 - pi0 * si0;
    pi0 = pr0 * si0 + pi0 * sr0;
    pr0 = t0;
    const t1 = pr1 * sr1 - pi1 * si1;
    pi1 = pr1 * si1 + pi1 * sr1;
    pr1 = t1;
  }
  out[0] = acc0 / (end - first);
  out[1] = acc1 / (end - first);
}

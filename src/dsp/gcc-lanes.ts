import type { BandLayout } from './bands.js';
import type { PairCorrelator } from './gcc.js';

/**
 * Lane forms of the kernels of ./gcc.ts, and the JavaScript twins of the WebAssembly kernels
 * (./gcc-kernels.wat): several independent evaluations in one pass over the bins. Each
 * evaluation is a phasor recursion whose steps wait on one another (a complex multiply per bin);
 * run side by side (pairs, lags, or neighbouring bins in lanes), the processor overlaps them.
 * The magnitudes, band scores, derivatives and hop coherence run in float32, every operation
 * rounded with Math.fround in the WebAssembly lanes' order, so the two paths agree bit for bit
 * and agree with the double-precision single kernels within float32 rounding
 * (test/dsp/gcc-lanes.test.ts); the rest keep the single kernels' double-precision arithmetic.
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
 * phasors still step through them); give null to score every band. A pair `alone` (no second
 * pair to run beside it on the kernels) has its bins split over two recursions instead
 * (bandScoresSplitF32): the same sums to float32 rounding, in another order.
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
  alone = false,
): void {
  for (let i = 0; i < count; i += 4) {
    const w = Math.min(4, count - i);
    if (alone) {
      setSplitPhasorsF32(laneScratch, lags, lagOffset + i * lagStride, lagStride, w, pc.n, bands.firstBin);
      bandScoresSplitF32(pc, bands, laneScratch, scoresOut, stride, offset + i, w, needed);
    } else {
      setPhasorsF32(laneScratch, 0, lags, lagOffset + i * lagStride, lagStride, w, pc.n, bands.firstBin);
      bandScoresF32(pc, bands, laneScratch, scoresOut, stride, offset + i, w, needed);
    }
  }
}

const laneScratch = new Float32Array(24);

/**
 * The phasors of the split recursions (band_scores_f32_1, bandScoresSplitF32) for `w` (1 .. 4)
 * lags lags[at + i * step]: [sr x4 si x4] the two-bin steps, [pr x4 pi x4] the phasors at bin
 * k0, [qr x4 qi x4] at bin k0 + 1; in double precision, rounded once; spare lanes repeat the last lag.
 */
export function setSplitPhasorsF32(ph: Float32Array, lags: Float64Array, at: number, step: number, w: number, n: number, k0: number): void {
  lanePhasors(ph, 0, lags, at, step, w, n, 2, k0, k0 + 1);
}

/**
 * bandScoresF32 for a pair alone, its bins two at a time in two recursions (P at bin k, Q at
 * k + 1, both stepping two bins; a band's odd last bin to P, then P takes Q's place and Q is P
 * stepped), a band's two sums added before its score: the order of the WebAssembly kernel
 * band_scores_f32_1, whose single recursion would otherwise wait on itself bin by bin.
 */
function bandScoresSplitF32(pc: PairCorrelator, bands: BandLayout, ph: Float32Array, out: Float64Array, stride: number, offset: number, write: number, needed: Float64Array | null): void {
  const f = Math.fround;
  const ar = pc.accRe;
  const ai = pc.accIm;
  for (let i = 0; i < write; i++) {
    const sr = ph[i]!;
    const si = ph[4 + i]!;
    let pr = ph[8 + i]!;
    let pi = ph[12 + i]!;
    let qr = ph[16 + i]!;
    let qi = ph[20 + i]!;
    let k = bands.firstBin;
    for (let b = 0; b < bands.count; b++) {
      const e = bands.end[b]!;
      const use = needed === null || needed[b]! > 0;
      let aP = 0;
      let aQ = 0;
      for (; k + 2 <= e; k += 2) {
        if (use) {
          aP = f(aP + f(f(f(ar[k]!) * pr) - f(f(ai[k]!) * pi)));
          aQ = f(aQ + f(f(f(ar[k + 1]!) * qr) - f(f(ai[k + 1]!) * qi)));
        }
        const t = f(f(pr * sr) - f(pi * si));
        pi = f(f(pr * si) + f(pi * sr));
        pr = t;
        const u = f(f(qr * sr) - f(qi * si));
        qi = f(f(qr * si) + f(qi * sr));
        qr = u;
      }
      if (k < e) {
        if (use) aP = f(aP + f(f(f(ar[k]!) * pr) - f(f(ai[k]!) * pi)));
        const t = f(f(pr * sr) - f(pi * si));
        const v = f(f(pr * si) + f(pi * sr));
        pr = qr;
        pi = qi;
        qr = t;
        qi = v;
        k++;
      }
      if (!use) continue;
      const o = b * stride + offset + i;
      out[o] = out[o]! + f(aP + aQ);
    }
  }
}

/**
 * Float32 phasors for `w` (1 .. 4) lags lags[at + i * step] into ph[first ..]: the steps
 * e^{j 2 pi lag / n} (real parts, then imaginary), then the phasors at bin k0, four lanes each,
 * computed in double precision and rounded once; spare lanes repeat the last lag.
 */
export function setPhasorsF32(ph: Float32Array, first: number, lags: Float64Array, at: number, step: number, w: number, n: number, k0: number): void {
  lanePhasors(ph, first, lags, at, step, w, n, 1, k0, NaN);
}

/**
 * For four lanes (lag lags[at + i * step] in lane i < w; spare lanes repeat the last), the
 * float32 cos and sin of s m0, s m1 and (unless NaN) s m2 with s = 2 pi lag / n, into ph[first ..]
 * as blocks of four: cos m0, sin m0, cos m1, sin m1, cos m2, sin m2.
 */
function lanePhasors(ph: Float32Array, first: number, lags: Float64Array, at: number, step: number, w: number, n: number, m0: number, m1: number, m2: number): void {
  for (let i = 0; i < 4; i++) {
    const s = (2 * Math.PI * lags[at + Math.min(i, w - 1) * step]!) / n;
    ph[first + i] = Math.cos(s * m0);
    ph[first + 4 + i] = Math.sin(s * m0);
    ph[first + 8 + i] = Math.cos(s * m1);
    ph[first + 12 + i] = Math.sin(s * m1);
    if (m2 === m2) {
      ph[first + 16 + i] = Math.cos(s * m2);
      ph[first + 20 + i] = Math.sin(s * m2);
    }
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
 * into lagsOut[p], on the same bands, with the same Newton steps and stopping rules per pair,
 * the derivatives summed in float32 lanes (derivativesF32: within 1e-5 sample of the
 * double-precision refinement in the tests). `d` is scratch of at least 2 * pcs.length
 * numbers; `active` of pcs.length.
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
      setDerivativePhasors(derivPh, bands, useBand, lagsOut[pending]!, lagsOut[p]!, pcs[p]!.n);
      derivativesF32(pcs[pending]!, pcs[p]!, bands, useBand, derivPh, derivOut);
      sumDerivativeLanes(derivOut, d, 2 * pending, 2 * p);
      pending = -1;
    }
    if (pending >= 0) {
      const pc = pcs[pending]!;
      setDerivativePhasors(derivPh, bands, useBand, lagsOut[pending]!, null, pc.n);
      derivativesF32(pc, null, bands, useBand, derivPh, derivOut);
      sumDerivativeLanes(derivOut, d, 2 * pending, -1);
    }
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
function lastOfUsedRun(useBand: Uint8Array, count: number, b: number): number {
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

/** Float32 scratch of the derivatives: the phasors (setDerivativePhasors) and the lanes' sums. */
const derivPh = new Float32Array(derivativePhasorFloats(64));
const derivOut = new Float32Array(16);

/** Floats of derivativesF32's phasor scratch for `bands` bands. */
export function derivativePhasorFloats(bands: number): number {
  return 16 + 16 * bands;
}

/**
 * The phasors of derivativesF32 for pairs A (lag ta) and B (lag tb), frame n, into ph: the
 * four-bin steps [srA x4 siA x4 srB x4 siB x4], then at 16 + 16 b for each band b that starts a
 * run of used bands [prA x4 piA x4 prB x4 piB x4] at its bins k .. k + 3 (k its first bin); B's
 * are left as they are when tb is null (pair A alone). In
 * double precision, rounded once to float32: the phasor at bin k from Math.cos and Math.sin, the
 * next three bins' by complex multiplies with the one-bin step (fewer trigonometric calls, which
 * cost more here than the sums they start; the doubles' rounding is far below float32's).
 */
export function setDerivativePhasors(ph: Float32Array, bands: BandLayout, useBand: Uint8Array, ta: number, tb: number | null, n: number): void {
  phasorLanes(ph, 0, bands, useBand, (2 * Math.PI * ta) / n);
  if (tb !== null) phasorLanes(ph, 8, bands, useBand, (2 * Math.PI * tb) / n);
}

/** One pair's half of setDerivativePhasors (`at` 0 for A, 8 for B), at `step` radians a bin. */
function phasorLanes(ph: Float32Array, at: number, bands: BandLayout, useBand: Uint8Array, step: number): void {
  const c1 = Math.cos(step);
  const s1 = Math.sin(step);
  fourBinStep(ph, at, c1, s1);
  for (let b = 0; b < bands.count; b++) {
    if (!useBand[b] || (b > 0 && useBand[b - 1])) continue;
    fourBinStart(ph, 16 + 16 * b + at, step, bands.start[b]!, c1, s1);
  }
}

/** ph[at .. at + 8) = [cos x4, sin x4] of four bins' step, from one bin's (c1, s1), in double precision. */
function fourBinStep(ph: Float32Array, at: number, c1: number, s1: number): void {
  const c2 = c1 * c1 - s1 * s1;
  const s2 = 2 * c1 * s1;
  const c4 = c2 * c2 - s2 * s2;
  const s4 = 2 * c2 * s2;
  for (let j = 0; j < 4; j++) {
    ph[at + j] = c4;
    ph[at + 4 + j] = s4;
  }
}

/** ph[at .. at + 8) = [cos x4, sin x4] of the phasors at bins k .. k + 3: Math.cos and Math.sin at k, then complex multiplies by one bin's (c1, s1). */
function fourBinStart(ph: Float32Array, at: number, step: number, k: number, c1: number, s1: number): void {
  let pr = Math.cos(step * k);
  let pi = Math.sin(step * k);
  for (let j = 0; j < 4; j++) {
    ph[at + j] = pr;
    ph[at + 4 + j] = pi;
    const t = pr * c1 - pi * s1;
    pi = pr * s1 + pi * c1;
    pr = t;
  }
}

/**
 * The hop coherence of a pair alone (./gcc.ts, coherenceSum over bins [first, end) divided by
 * their count) in float32, four neighbouring bins in four lanes, the lanes past `end` in the
 * last pass cleared: the order of the WebAssembly kernel (gcc-kernels.wat, hop_coherence_1f),
 * bit for bit; the lanes are added in double precision. `ph` is scratch of 16 floats.
 */
export function hopCoherenceF32(a: ArrayLike<number>, b: ArrayLike<number>, invA: Float64Array, invB: Float64Array, n: number, lag: number, first: number, end: number, ph: Float32Array): number {
  if (end <= first) return 0;
  setCoherencePhasors(ph, lag, n, first);
  const f = Math.fround;
  let sum = 0;
  for (let j = 0; j < 4; j++) {
    const sr = ph[j]!;
    const si = ph[4 + j]!;
    let pr = ph[8 + j]!;
    let pi = ph[12 + j]!;
    let acc = 0;
    for (let k = first; k < end; k += 4) {
      const i = k + j;
      const inside = i < end;
      const xr = inside ? f(a[2 * i]!) : 0;
      const xi = inside ? f(a[2 * i + 1]!) : 0;
      const yr = inside ? f(b[2 * i]!) : 0;
      const yi = inside ? f(b[2 * i + 1]!) : 0;
      const g = f((inside ? f(invA[i]!) : 0) * (inside ? f(invB[i]!) : 0));
      const cr = f(f(xr * yr) + f(xi * yi));
      const ci = f(f(xr * yi) - f(xi * yr));
      acc = f(acc + f(f(f(cr * pr) - f(ci * pi)) * g));
      const t = f(f(pr * sr) - f(pi * si));
      pi = f(f(pr * si) + f(pi * sr));
      pr = t;
    }
    sum += acc;
  }
  return sum / (end - first);
}

/** hopCoherenceF32's phasors: [sr x4 si x4] (four bins' step) and [pr x4 pi x4] at bins k0 .. k0 + 3. */
export function setCoherencePhasors(ph: Float32Array, lag: number, n: number, k0: number): void {
  const step = (2 * Math.PI * lag) / n;
  const c1 = Math.cos(step);
  const s1 = Math.sin(step);
  fourBinStep(ph, 0, c1, s1);
  fourBinStart(ph, 8, step, k0, c1, s1);
}

/**
 * The first and second derivative of two pairs' correlations (refineLag, ./gcc.ts) over the
 * used bands in float32, four neighbouring bins in four lanes per run of used bands (a run's
 * last one to three bins with the lanes past its end cleared: zero samples and zero weight),
 * the phasors from setDerivativePhasors. Every operation is rounded to float32 in the order of
 * the WebAssembly kernel (gcc-kernels.wat, derivatives_f32), so both give the same lanes bit
 * for bit: out = [d1A x4 d2A x4 d1B x4 d2B x4] (B's zero when pb is null). The Newton step is
 * d1 / d2 over a few hundred bins: float32 moves a refined lag by well under 1e-5 sample
 * (test/dsp/gcc-lanes.test.ts; about 2e-7 seen there).
 */
export function derivativesF32(pa: PairCorrelator, pb: PairCorrelator | null, bands: BandLayout, useBand: Uint8Array, ph: Float32Array, out: Float32Array): void {
  const f = Math.fround;
  const w0 = f((2 * Math.PI) / pa.n);
  out.fill(0);
  for (let lane = 0; lane < (pb === null ? 4 : 8); lane++) {
    // lanes 0-3: pair A's bins k + lane; 4-7: pair B's bins k + lane - 4
    const j = lane & 3;
    const pc = lane < 4 ? pa : pb!;
    const o = lane < 4 ? 0 : 8;
    const sr = ph[lane < 4 ? j : 8 + j]!;
    const si = ph[lane < 4 ? 4 + j : 12 + j]!;
    const ar = pc.accRe;
    const ai = pc.accIm;
    let d1 = 0;
    let d2 = 0;
    for (let b = 0; b < bands.count; b++) {
      if (!useBand[b]) continue;
      const last = lastOfUsedRun(useBand, bands.count, b);
      const at = 16 + 16 * b + (lane < 4 ? 0 : 8);
      let pr = ph[at + j]!;
      let pi = ph[at + 4 + j]!;
      const e = bands.end[last]!;
      for (let k = bands.start[b]!; k < e; k += 4) {
        const inside = k + j < e;
        const w = inside ? f(w0 * (k + j)) : 0;
        const ww = f(w * w);
        const x = inside ? f(ar[k + j]!) : 0;
        const y = inside ? f(ai[k + j]!) : 0;
        d1 = f(d1 - f(w * f(f(x * pi) + f(y * pr))));
        d2 = f(d2 - f(ww * f(f(x * pr) - f(y * pi))));
        const t = f(f(pr * sr) - f(pi * si));
        pi = f(f(pr * si) + f(pi * sr));
        pr = t;
      }
      b = last;
    }
    out[o + j] = d1;
    out[o + 4 + j] = d2;
  }
}

/** The lanes of derivativesF32 added (in double precision, lane order) into d[oa], d[oa + 1] and, unless ob < 0, d[ob], d[ob + 1]. */
export function sumDerivativeLanes(out: Float32Array, d: Float64Array, oa: number, ob: number): void {
  d[oa] = out[0]! + out[1]! + out[2]! + out[3]!;
  d[oa + 1] = out[4]! + out[5]! + out[6]! + out[7]!;
  if (ob < 0) return;
  d[ob] = out[8]! + out[9]! + out[10]! + out[11]!;
  d[ob + 1] = out[12]! + out[13]! + out[14]! + out[15]!;
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
 * Per bin of [k0, k1) of a spectrum (interleaved): power[k] += |X_k|^2 (double precision) and
 * invMag[k] = 1 / |X_k| in float32 (0 where |X_k|^2 is not above 1e-30), and, with `unit`,
 * channel c's unit spectrum X_k invMag[k] rounded to float32 (UnitLayout `layout`). PHAT needs
 * 1 / |X| to a few digits only; float32 makes its square root and division four to a SIMD
 * instruction (GccKernels.magnitudes does the same operations, bit for bit).
 */
export function magnitudes(spec: ArrayLike<number>, power: Float64Array, invMag: Float64Array, k0: number, k1: number, unit: Float32Array | null = null, c = 0, layout: UnitLayout | null = null): void {
  const f = Math.fround;
  for (let k = k0; k < k1; k++) {
    const r = f(spec[2 * k]!);
    const i = f(spec[2 * k + 1]!);
    const p2 = r * r + i * i;
    power[k] += p2;
    const g = p2 > 1e-30 ? f(1 / f(Math.sqrt(f(p2)))) : 0;
    invMag[k] = g;
    if (unit === null) continue;
    unit[k * layout!.stride + c] = r * g;
    unit[k * layout!.stride + layout!.half + c] = i * g;
  }
}

/**
 * The hop coherence (./gcc.ts, coherenceSum: sum over bins [k0, k1) of Re(U_a conj(U_b)
 * e^{j 2 pi k lag / n})) of four pairs at once in float32, one pair per lane, from unit spectra
 * (magnitudes). Lane i is pair (chans[at + i], chans[at + 4 + i]); ph holds the float32
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

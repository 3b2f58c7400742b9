/**
 * The bench fit: from the delays of takes with known source directions, estimate by linear
 * least squares over all pairs, segments and takes
 *   tdoa_ab(t) = (p_a - p_b) . u / c + (o_b - o_a) + (e_b - e_a) t
 * the mic positions p (a pair: its spacing), a constant timing offset o per channel and a
 * clock drift e per channel (channel 0 is the reference: o_0 = e_0 = 0; position 0 fixes the
 * unobservable shift). The model is linear in the unknowns, so one solve is exact; the
 * uncertainties come from the residuals and the normal matrix. Then: swapped channels (the
 * fitted positions matched to the file's), polarity (signs of the correlation peaks), gain
 * (levels) and the direction error left per take. Pure.
 */
import { UsageError } from '../util/errors.js';
import { micPairs, type ArrayGeometry } from '../geometry/array-geometry.js';
import { dot, norm, sub, unitFromAzEl, type Vec3 } from '../geometry/vec3.js';
import { angleBetweenDeg, bestDirection, pairConeAngleDeg } from './direction-fit.js';
import { solveLeastSquares, type LeastSquaresResult } from './least-squares.js';
import type { BenchCheckOptions } from './options.js';
import type { TakeDelays } from './take-delays.js';

export interface BenchTake {
  /** How the user named the take (shown in the report). */
  label: string;
  azimuthDeg: number;
  /** null for a horizontal direction given as a bare azimuth. */
  elevationDeg: number | null;
  /** Takes of one recording share its clock (drift time runs from its start). */
  recording: string;
  durationS: number;
  delays: TakeDelays;
}

export interface Estimate {
  value: number;
  sigma: number;
}

export interface TakeResult {
  label: string;
  azimuthDeg: number;
  elevationDeg: number | null;
  /** Per pair: delay the file's geometry predicts, delay measured (mean over segments), delay of the fitted model; seconds. */
  expectedS: number[];
  measuredS: number[];
  fittedS: number[];
  /** Direction error with the file's geometry and no corrections, and after the fit, degrees. */
  errorBeforeDeg: number;
  errorAfterDeg: number;
  segmentsUsed: number;
  segments: number;
}

export interface BenchFit {
  channels: number;
  pairs: [number, number][];
  /** 'spacing' for a two-mic pair, else 'positions'. */
  mode: 'spacing' | 'positions';
  /** Pair mode: file and fitted spacing (m); fitted is null when the takes do not determine it. */
  spacingFileM: number | null;
  spacing: Estimate | null;
  filePositions: Vec3[];
  /** Fitted positions per channel, centred on the file's centroid; null when not determined. */
  positions: Vec3[] | null;
  /** 1-sigma of each position coordinate relative to mic 0 (0 where not fitted). */
  positionSigma: Vec3[] | null;
  /** Coordinates fitted: 1 (pair axis), 2 (x, y) or 3. */
  fittedDims: number;
  /** Channel c holds the mic the file lists as channel map[c]. */
  channelMap: number[];
  swapped: boolean | null;
  offset: Estimate[];
  drift: Estimate[] | null;
  polarityInverted: boolean[];
  /** Share of segments whose peak sign agrees with the per-channel polarity, per channel. */
  polaritySupport: number[];
  gainDb: Estimate[];
  takes: TakeResult[];
  residualDegRms: number;
  residualBeforeDegRms: number;
  /** rms of the delay residuals after the fit, seconds. */
  residualRmsS: number;
  rowsUsed: number;
  rowsRejected: number;
  notes: string[];
}

const US = 1e-6;

interface Row {
  take: number;
  seg: number;
  pair: number;
  timeS: number;
  y: number;
  coeffs: Float64Array;
}

interface Columns {
  offset: number;
  drift: number;
  geometry: number;
  geometryCount: number;
  total: number;
}

function layout(M: number, fitDrift: boolean, geometryCount: number): Columns {
  const offset = 0;
  const drift = M - 1;
  const geometry = drift + (fitDrift ? M - 1 : 0);
  return { offset, drift: fitDrift ? drift : -1, geometry, geometryCount, total: geometry + geometryCount };
}

/** Every permutation of 0..n-1 (n <= 8), identity first. */
function* permutations(n: number): Generator<number[]> {
  const a = Array.from({ length: n }, (_, i) => i);
  const c = new Array<number>(n).fill(0);
  yield [...a];
  let i = 0;
  while (i < n) {
    if (c[i]! < i) {
      const j = i % 2 === 0 ? 0 : c[i]!;
      [a[j], a[i]] = [a[i]!, a[j]!];
      yield [...a];
      c[i] = c[i]! + 1;
      i = 0;
    } else {
      c[i] = 0;
      i++;
    }
  }
}

function mean(xs: readonly number[]): number {
  return xs.length ? xs.reduce((s, v) => s + v, 0) / xs.length : NaN;
}

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
}

/** What every step of the fit needs: the array as the file gives it, the pairs and the take directions. */
interface FitSetup {
  readonly c: number;
  readonly M: number;
  readonly pairs: [number, number][];
  readonly file: readonly Vec3[];
  readonly mode: 'spacing' | 'positions';
  /** Coordinates fitted per mic: 1 (pair axis), 2 (x, y) or 3. */
  readonly dims: number;
  readonly threeD: boolean;
  /** The pair's axis (pair mode). */
  readonly axis: Vec3;
  readonly takes: readonly BenchTake[];
  /** Unit direction of each take. */
  readonly units: Vec3[];
}

/** The delay of pair p for direction u with the file's geometry. */
function fileTdoa(f: FitSetup, p: number, u: Vec3): number {
  return dot(sub(f.file[f.pairs[p]![0]]!, f.file[f.pairs[p]![1]]!), u) / f.c;
}

/** One row of the linear model per pair, segment and take with a delay. */
function buildRows(f: FitSetup, cols: Columns, withGeometry: boolean): Row[] {
  const rows: Row[] = [];
  f.takes.forEach((t, ti) => {
    const u = f.units[ti]!;
    t.delays.segments.forEach((s, si) => {
      for (let p = 0; p < f.pairs.length; p++) {
        const tau = s.tdoaS[p]!;
        if (!Number.isFinite(tau)) continue;
        const [a, b] = f.pairs[p]!;
        const k = new Float64Array(cols.total);
        if (b > 0) k[cols.offset + b - 1] += 1;
        if (a > 0) k[cols.offset + a - 1] -= 1;
        if (cols.drift >= 0) {
          if (b > 0) k[cols.drift + b - 1] += s.timeS;
          if (a > 0) k[cols.drift + a - 1] -= s.timeS;
        }
        if (withGeometry) {
          if (f.mode === 'spacing') {
            // p_1 = p_1(file) + ds * axis, so d tdoa / d ds = -(axis . u) / c.
            k[cols.geometry] = -dot(f.axis, u) / f.c;
          } else {
            for (let d = 0; d < f.dims; d++) {
              if (a > 0) k[cols.geometry + (a - 1) * f.dims + d] += u[d]! / f.c;
              if (b > 0) k[cols.geometry + (b - 1) * f.dims + d] -= u[d]! / f.c;
            }
          }
        }
        rows.push({ take: ti, seg: si, pair: p, timeS: s.timeS, y: tau - fileTdoa(f, p, u), coeffs: k });
      }
    });
  });
  return rows;
}

/** The least-squares solution with the unknowns the takes determine, after one pass of outlier rejection. */
interface Solved {
  sol: LeastSquaresResult;
  cols: Columns;
  rows: Row[];
  withGeometry: boolean;
  fitDrift: boolean;
  /** Rows rejected as outliers (0 when none or when rejection was not applied). */
  rejected: number;
}

function solve(f: FitSetup, fitDriftWanted: boolean, sampleRate: number, notes: string[]): Solved {
  const { M, mode, threeD } = f;
  let fitDrift = fitDriftWanted;
  const solveRows = (rows: Row[], cols: Columns): LeastSquaresResult => solveLeastSquares(rows.map((r) => r.coeffs), Float64Array.from(rows.map((r) => r.y)), cols.total);
  const geometryCount = mode === 'spacing' ? 1 : f.dims * (M - 1);
  let withGeometry = true;
  let cols = layout(M, fitDrift, geometryCount);
  let rows = buildRows(f, cols, withGeometry);
  if (rows.length === 0) {
    throw new UsageError('no take gave a usable delay: check that the stimulus was playing and reached every mic');
  }
  let sol = solveRows(rows, cols);
  if (sol.undetermined.slice(cols.geometry, cols.geometry + cols.geometryCount).some(Boolean)) {
    const need = mode === 'spacing' ? 'two directions at least (best spread from -60 to 60 degrees)' : threeD ? 'four directions at least, not all in one plane' : 'three directions at least, spread around the array';
    notes.push(`${mode === 'spacing' ? 'spacing' : 'positions'} not measured: the takes do not tell geometry from timing offsets; record ${need}`);
    withGeometry = false;
    cols = layout(M, fitDrift, 0);
    rows = buildRows(f, cols, false);
    sol = solveRows(rows, cols);
  }
  if (fitDrift && sol.undetermined.slice(cols.drift, cols.drift + M - 1).some(Boolean)) {
    notes.push('drift not measured: the takes do not tell it from the other unknowns');
    fitDrift = false;
    cols = layout(M, false, withGeometry ? geometryCount : 0);
    rows = buildRows(f, cols, withGeometry);
    sol = solveRows(rows, cols);
  }

  // One pass of outlier rejection (a segment that locked onto a wrong peak).
  const absRes = Array.from(sol.residuals, Math.abs);
  const robust = 1.4826 * median(absRes);
  const limit = Math.max(6 * robust, 0.05 / sampleRate);
  const keep = absRes.map((r) => r <= limit);
  let rejected = keep.filter((k) => !k).length;
  if (rejected > 0 && rejected < rows.length / 2) {
    rows = rows.filter((_, i) => keep[i]);
    sol = solveRows(rows, cols);
  } else {
    rejected = 0;
  }
  return { sol, cols, rows, withGeometry, fitDrift, rejected };
}

/** The fitted mic geometry: a pair's spacing, or positions centred on the file's centroid; null when not fitted. */
function fittedGeometry(f: FitSetup, s: Solved, est: (j: number) => Estimate): { spacing: Estimate | null; positions: Vec3[] | null; positionSigma: Vec3[] | null } {
  const { file, dims } = f;
  if (!s.withGeometry) return { spacing: null, positions: null, positionSigma: null };
  if (f.mode === 'spacing') {
    const ds = est(s.cols.geometry);
    const sp = norm(sub(file[1]!, file[0]!)) + ds.value;
    const centre = scale(add(file[0]!, file[1]!), 0.5);
    const sa = scale(f.axis, ds.sigma);
    return {
      spacing: { value: Math.abs(sp), sigma: ds.sigma },
      positions: [add(centre, scale(f.axis, -sp / 2)), add(centre, scale(f.axis, sp / 2))],
      positionSigma: [[0, 0, 0], [Math.abs(sa[0]), Math.abs(sa[1]), Math.abs(sa[2])]],
    };
  }
  const raw: [number, number, number][] = file.map((p) => [p[0], p[1], p[2]]);
  const sig: [number, number, number][] = file.map(() => [0, 0, 0]);
  for (let ch = 1; ch < f.M; ch++) {
    for (let d = 0; d < dims; d++) {
      const e = est(s.cols.geometry + (ch - 1) * dims + d);
      raw[ch]![d] = file[ch]![d]! + e.value;
      sig[ch]![d] = e.sigma;
    }
  }
  // Centre the fitted coordinates on the file's centroid (the shift is unobservable).
  for (let d = 0; d < dims; d++) {
    const shift = mean(file.map((p) => p[d]!)) - mean(raw.map((p) => p[d]!));
    for (const p of raw) p[d] += shift;
  }
  return { spacing: null, positions: raw, positionSigma: sig };
}

/** Channel order: the permutation that puts the fitted positions nearest the file's. */
function channelOrder(f: FitSetup, positions: Vec3[] | null): { channelMap: number[]; swapped: boolean | null } {
  let channelMap = Array.from({ length: f.M }, (_, i) => i);
  if (!positions) return { channelMap, swapped: null };
  let bestCost = Infinity;
  for (const perm of permutations(f.M)) {
    let cost = 0;
    for (let ch = 0; ch < f.M && cost < bestCost; ch++) {
      const d = sub(positions[ch]!, f.file[perm[ch]!]!);
      cost += d[0] * d[0] + d[1] * d[1] + (f.dims === 3 ? d[2] * d[2] : 0);
    }
    if (cost < bestCost) {
      bestCost = cost;
      channelMap = perm;
    }
  }
  return { channelMap, swapped: channelMap.some((m, i) => m !== i) };
}

/** Polarity: the sign of pair (0, c) over all segments; support from every pair. */
function polarity(f: FitSetup): { polarityInverted: boolean[]; polaritySupport: number[] } {
  const { M, pairs, takes } = f;
  const P = pairs.length;
  const signSum = new Float64Array(M);
  for (const t of takes) for (const s of t.delays.segments) for (let p = 0; p < P; p++) if (pairs[p]![0] === 0) signSum[pairs[p]![1]] += s.sign[p]!;
  const polarityInverted = Array.from(signSum, (v, ch) => ch > 0 && v < 0);
  const agree = new Float64Array(M);
  const count = new Float64Array(M);
  for (const t of takes) {
    for (const s of t.delays.segments) {
      for (let p = 0; p < P; p++) {
        if (s.sign[p] === 0) continue;
        const [a, b] = pairs[p]!;
        const expect = (polarityInverted[a] ? -1 : 1) * (polarityInverted[b] ? -1 : 1);
        const ok = s.sign[p] === expect ? 1 : 0;
        for (const ch of [a, b]) {
          agree[ch] += ok;
          count[ch] += 1;
        }
      }
    }
  }
  const polaritySupport = Array.from({ length: M }, (_, ch) => (count[ch]! > 0 ? agree[ch]! / count[ch]! : 0));
  return { polarityInverted, polaritySupport };
}

/** Gain per channel against channel 0, from the take levels. */
function gains(f: FitSetup): Estimate[] {
  const gainDb: Estimate[] = [];
  for (let ch = 0; ch < f.M; ch++) {
    const d = f.takes.map((t) => t.delays.levelDbfs[ch]! - t.delays.levelDbfs[0]!).filter(Number.isFinite);
    const m = mean(d);
    const sd = d.length > 1 ? Math.sqrt(d.reduce((s, v) => s + (v - m) ** 2, 0) / (d.length - 1)) / Math.sqrt(d.length) : 0;
    gainDb.push({ value: ch === 0 ? 0 : m, sigma: ch === 0 ? 0 : sd });
  }
  return gainDb;
}

/** One take: expected, measured and fitted delays; direction error before and after the fit. */
function takeResult(f: FitSetup, ti: number, fittedPositions: readonly Vec3[], offset: readonly Estimate[], drift: readonly Estimate[] | null): TakeResult {
  const { pairs, c } = f;
  const P = pairs.length;
  const t = f.takes[ti]!;
  const u = f.units[ti]!;
  const used = t.delays.segments.map((s) => s.tdoaS);
  const measured = new Float64Array(P);
  const corrected = new Float64Array(P);
  const fitted: number[] = [];
  let segmentsUsed = 0;
  for (const s of t.delays.segments) if (Array.from(s.tdoaS).some(Number.isFinite)) segmentsUsed++;
  for (let p = 0; p < P; p++) {
    const [a, b] = pairs[p]!;
    const vals: number[] = [];
    const corr: number[] = [];
    t.delays.segments.forEach((s, si) => {
      const v = used[si]![p]!;
      if (!Number.isFinite(v)) return;
      vals.push(v);
      let k = offset[b]!.value - offset[a]!.value;
      if (drift) k += (drift[b]!.value - drift[a]!.value) * US * s.timeS;
      corr.push(v - k);
    });
    measured[p] = vals.length ? mean(vals) : NaN;
    corrected[p] = corr.length ? mean(corr) : NaN;
    const tMid = mean(t.delays.segments.map((s) => s.timeS));
    let model = dot(sub(fittedPositions[a]!, fittedPositions[b]!), u) / c + offset[b]!.value - offset[a]!.value;
    if (drift) model += (drift[b]!.value - drift[a]!.value) * US * tMid;
    fitted.push(model);
  }
  return {
    label: t.label,
    azimuthDeg: t.azimuthDeg,
    elevationDeg: t.elevationDeg,
    expectedS: Array.from({ length: P }, (_, p) => fileTdoa(f, p, u)),
    measuredS: Array.from(measured),
    fittedS: fitted,
    errorBeforeDeg: directionError(f.file, pairs, measured, c, u, f.mode, !f.threeD),
    errorAfterDeg: directionError(fittedPositions, pairs, corrected, c, u, f.mode, !f.threeD),
    segmentsUsed,
    segments: t.delays.segments.length,
  };
}

export function fitBenchArray(geometry: ArrayGeometry, speedOfSound: number, sampleRate: number, takes: readonly BenchTake[], opts: BenchCheckOptions): BenchFit {
  const M = geometry.mics.length;
  const file = geometry.mics.map((m) => m.position);
  const mode: 'spacing' | 'positions' = M === 2 ? 'spacing' : 'positions';
  const threeD = takes.some((t) => t.elevationDeg !== null && t.elevationDeg !== 0);
  const f: FitSetup = {
    c: speedOfSound,
    M,
    pairs: micPairs(geometry).map(([a, b]) => [a, b] as [number, number]),
    file,
    mode,
    dims: mode === 'spacing' ? 1 : threeD ? 3 : 2,
    threeD,
    axis: mode === 'spacing' ? scale(sub(file[1]!, file[0]!), 1 / norm(sub(file[1]!, file[0]!))) : [1, 0, 0],
    takes,
    units: takes.map((t) => unitFromAzEl(t.azimuthDeg, t.elevationDeg ?? 0)),
  };
  const longest = Math.max(...takes.map((t) => t.durationS));
  const notes: string[] = [];
  const fitDriftWanted = longest >= opts.driftMinSpanS;
  if (!fitDriftWanted) notes.push(`drift not measured: the longest take lasts ${longest.toFixed(1)} s, under the ${opts.driftMinSpanS} s needed (--drift-min-span)`);
  const solved = solve(f, fitDriftWanted, sampleRate, notes);
  const { sol, cols } = solved;
  const est = (j: number): Estimate => ({ value: sol.x[j]!, sigma: Math.sqrt(Math.max(0, sol.cov[j * cols.total + j]!)) });

  const offset: Estimate[] = [{ value: 0, sigma: 0 }];
  for (let ch = 1; ch < M; ch++) offset.push(est(cols.offset + ch - 1));
  let drift: Estimate[] | null = null;
  if (solved.fitDrift) {
    drift = [{ value: 0, sigma: 0 }];
    for (let ch = 1; ch < M; ch++) {
      const e = est(cols.drift + ch - 1);
      drift.push({ value: e.value * 1e6, sigma: e.sigma * 1e6 });
    }
  }
  const { spacing, positions, positionSigma } = fittedGeometry(f, solved, est);
  const takeResults = takes.map((_, ti) => takeResult(f, ti, positions ?? file, offset, drift));
  const rms = (xs: number[]): number => Math.sqrt(mean(xs.filter(Number.isFinite).map((x) => x * x)));

  return {
    channels: M,
    pairs: f.pairs,
    mode,
    spacingFileM: mode === 'spacing' ? norm(sub(file[1]!, file[0]!)) : null,
    spacing,
    filePositions: file.map((p) => [p[0], p[1], p[2]] as Vec3),
    positions,
    positionSigma,
    fittedDims: solved.withGeometry ? f.dims : 0,
    ...channelOrder(f, positions),
    offset,
    drift,
    ...polarity(f),
    gainDb: gains(f),
    takes: takeResults,
    residualDegRms: rms(takeResults.map((t) => t.errorAfterDeg)),
    residualBeforeDegRms: rms(takeResults.map((t) => t.errorBeforeDeg)),
    residualRmsS: Math.sqrt(sol.rss / Math.max(1, solved.rows.length)),
    rowsUsed: solved.rows.length,
    rowsRejected: solved.rejected,
    notes,
  };
}

function directionError(
  positions: readonly Vec3[],
  pairs: readonly (readonly [number, number])[],
  tdoaS: Float64Array,
  c: number,
  u: Vec3,
  mode: 'spacing' | 'positions',
  horizontal: boolean,
): number {
  if (!Array.from(tdoaS).some(Number.isFinite)) return NaN;
  if (mode === 'spacing') {
    const d = sub(positions[1]!, positions[0]!);
    const s = norm(d);
    const axis = scale(d, 1 / s);
    const given = Math.acos(Math.max(-1, Math.min(1, dot(axis, u)))) / (Math.PI / 180);
    return Math.abs(pairConeAngleDeg(tdoaS[0]!, s, c) - given);
  }
  const est = bestDirection(positions, pairs, tdoaS, c, horizontal);
  return angleBetweenDeg(unitFromAzEl(est.azimuthDeg, est.elevationDeg), u);
}

function scale(v: Vec3, k: number): Vec3 {
  return [v[0] * k, v[1] * k, v[2] * k];
}

function add(a: Vec3, b: Vec3): Vec3 {
  return [a[0] + b[0], a[1] + b[1], a[2] + b[2]];
}

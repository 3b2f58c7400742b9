/**
 * Position fix from bearing lines (and, with synchronised clocks, arrival times) on the
 * tangent plane, by weighted least squares:
 *  - a bearing's residual is the perpendicular distance of the fix from the bearing line,
 *    with sigma^2 = (range * bearing sigma)^2 + station position sigma^2; the ranges come
 *    from the current fix, so the weights are iterated;
 *  - an arrival's residual is range - c (t_arrival - T), with the emission time T a third
 *    unknown (so arrival-time differences between stations carry the information), sigma
 *    c times the onset and clock uncertainty;
 *  - Gauss-Newton steps until the fix moves less than 0.1 mm; covariance (J^T W J)^-1.
 * Checks: near-parallel bearings (largest crossing angle below a threshold) give no fix, a
 * fix behind a station's bearing ray is refused, and with four or more stations an outlying
 * station is found by leaving each out in turn. Pure: numbers in, numbers out.
 */
import type { Covariance2 } from './ellipse.js';
import { invertMatrix } from '../util/matrix.js';

export interface BearingLine {
  station: string;
  /** Station east, north, up on the plane (metres). */
  at: readonly [number, number, number];
  /** Unit direction (east, north) of the bearing on the plane. */
  dir: readonly [number, number];
  /** One-sigma bearing uncertainty, radians. */
  sdRad: number;
}

export interface Arrival {
  station: string;
  at: readonly [number, number, number];
  /** Onset time on the common clock, seconds. */
  timeS: number;
  /** One-sigma timing uncertainty (onset and clock), seconds. */
  sdS: number;
}

export interface SolverSettings {
  speedOfSound: number;
  positionSdM: number;
  minCrossingDeg: number;
  outlierSigma: number;
}

export type FixFlag =
  | 'poor-geometry'
  | 'behind-station'
  | 'outlier-dropped'
  | 'inconsistent'
  | 'time-differences'
  | 'no-redundancy'
  | 'no-convergence';

export interface StationResidual {
  station: string;
  /** Perpendicular miss distance of the fix from this station's bearing line, metres (signed). */
  missM: number;
  /** The miss in sigmas. */
  normalized: number;
  /** Distance along the bearing ray to the foot of the fix; negative means behind the station. */
  alongM: number;
  /** The bearing's unit direction (east, north) on the plane. */
  dir: readonly [number, number];
}

/** What one least-squares solve gives. */
interface SolvedCore {
  east: number;
  north: number;
  /** Up coordinate assumed for the source: mean of the used stations' up. */
  up: number;
  cov: Covariance2;
  /** Emission time (common clock) and its sigma, when arrival times were used. */
  emissionS: number | null;
  emissionSdS: number | null;
  chi2: number;
  dof: number;
  residuals: StationResidual[];
}

export interface FixSolution extends SolvedCore {
  /** False when the observations give no trustworthy point (see flags). */
  ok: boolean;
  used: string[];
  dropped: string[];
  /** Root mean square perpendicular miss of the used bearing lines, metres. */
  residualM: number;
  /** Largest crossing angle between the used bearing lines, degrees (0..90). */
  crossingDeg: number;
  flags: FixFlag[];
}

const DEG = Math.PI / 180;
const MIN_SIGMA_M = 1e-3;
const MAX_ITERATIONS = 50;

/** A line on the plane: a point and a unit direction (east, north). */
export interface PlaneLine {
  at: readonly [number, number] | readonly [number, number, number];
  dir: readonly [number, number];
}

/** Largest crossing angle (degrees, 0..90) between any two of the lines. */
export function largestCrossingDeg(lines: readonly PlaneLine[]): number {
  let best = 0;
  for (let i = 0; i < lines.length; i++) {
    for (let j = i + 1; j < lines.length; j++) {
      const c = Math.abs(lines[i]!.dir[0] * lines[j]!.dir[0] + lines[i]!.dir[1] * lines[j]!.dir[1]);
      best = Math.max(best, Math.acos(Math.min(1, c)) / DEG);
    }
  }
  return best;
}

function range3(at: readonly [number, number, number], e: number, n: number, up: number): number {
  return Math.hypot(e - at[0], n - at[1], up - at[2]);
}

/** Unweighted intersection of lines: minimise the sum of squared perpendicular distances; null if degenerate. */
export function meetLines(lines: readonly PlaneLine[]): [number, number] | null {
  let a = 0;
  let b = 0;
  let d = 0;
  let r0 = 0;
  let r1 = 0;
  for (const l of lines) {
    const nx = l.dir[1];
    const ny = -l.dir[0];
    const c = nx * l.at[0] + ny * l.at[1];
    a += nx * nx;
    b += nx * ny;
    d += ny * ny;
    r0 += nx * c;
    r1 += ny * c;
  }
  const det = a * d - b * b;
  if (Math.abs(det) < 1e-12 * (a * d + 1e-300)) return null;
  return [(d * r0 - b * r1) / det, (a * r1 - b * r0) / det];
}

interface Solved extends SolvedCore {
  arrivalNormalized: Map<string, number>;
  converged: boolean;
}

function bearingSigma(l: BearingLine, rangeM: number, s: SolverSettings): number {
  return Math.max(MIN_SIGMA_M, Math.hypot(rangeM * l.sdRad, s.positionSdM));
}

function residualOf(l: BearingLine, east: number, north: number, up: number, s: SolverSettings): StationResidual {
  const dx = east - l.at[0];
  const dy = north - l.at[1];
  const miss = l.dir[1] * dx - l.dir[0] * dy;
  const along = l.dir[0] * dx + l.dir[1] * dy;
  const sigma = bearingSigma(l, range3(l.at, east, north, up), s);
  return { station: l.station, missM: miss, normalized: miss / sigma, alongM: along, dir: l.dir };
}

function solveOnce(lines: readonly BearingLine[], arrivals: readonly Arrival[], s: SolverSettings): Solved | null {
  const start = meetLines(lines);
  if (start === null) return null;
  const up = lines.reduce((acc, l) => acc + l.at[2], 0) / lines.length;
  const c = s.speedOfSound;
  const useTime = arrivals.length >= 2;
  const np = useTime ? 3 : 2;
  let e = start[0];
  let n = start[1];
  let t = 0;
  if (useTime) t = arrivals.reduce((acc, a) => acc + a.timeS - range3(a.at, e, n, up) / c, 0) / arrivals.length;
  let normal: number[] = [];
  let chi2 = 0;
  let converged = false;
  for (let iter = 0; iter < MAX_ITERATIONS; iter++) {
    normal = new Array<number>(np * np).fill(0);
    const rhs = new Array<number>(np).fill(0);
    chi2 = 0;
    const addRow = (j: readonly number[], r: number, w: number): void => {
      for (let p = 0; p < np; p++) {
        rhs[p] = rhs[p]! + j[p]! * w * r;
        for (let q = 0; q < np; q++) normal[p * np + q] = normal[p * np + q]! + j[p]! * w * j[q]!;
      }
      chi2 += w * r * r;
    };
    for (const l of lines) {
      const nx = l.dir[1];
      const ny = -l.dir[0];
      const r = nx * (e - l.at[0]) + ny * (n - l.at[1]);
      const sigma = bearingSigma(l, range3(l.at, e, n, up), s);
      addRow(useTime ? [nx, ny, 0] : [nx, ny], r, 1 / (sigma * sigma));
    }
    if (useTime) {
      for (const a of arrivals) {
        const rng = Math.max(1e-6, range3(a.at, e, n, up));
        const r = rng - c * (a.timeS - t);
        const sigma = Math.max(MIN_SIGMA_M, Math.hypot(c * a.sdS, s.positionSdM));
        addRow([(e - a.at[0]) / rng, (n - a.at[1]) / rng, c], r, 1 / (sigma * sigma));
      }
    }
    const inv = invertMatrix(normal, np);
    if (inv === null) return null;
    const step = new Array<number>(np).fill(0);
    for (let p = 0; p < np; p++) for (let q = 0; q < np; q++) step[p] = step[p]! - inv[p * np + q]! * rhs[q]!;
    e += step[0]!;
    n += step[1]!;
    if (useTime) t += step[2]!;
    if (Math.hypot(step[0]!, step[1]!) < 1e-4) {
      converged = true;
      break;
    }
  }
  // Covariance and chi-square at the final point (weights re-evaluated there).
  const residuals = lines.map((l) => residualOf(l, e, n, up, s));
  const arrivalNormalized = new Map<string, number>();
  chi2 = residuals.reduce((acc, r) => acc + r.normalized * r.normalized, 0);
  if (useTime) {
    for (const a of arrivals) {
      const r = range3(a.at, e, n, up) - c * (a.timeS - t);
      const z = r / Math.max(MIN_SIGMA_M, Math.hypot(c * a.sdS, s.positionSdM));
      arrivalNormalized.set(a.station, z);
      chi2 += z * z;
    }
  }
  const inv = invertMatrix(normal, np);
  if (inv === null) return null;
  const nObs = lines.length + (useTime ? arrivals.length : 0);
  return {
    east: e,
    north: n,
    up,
    cov: [inv[0]!, inv[1]!, inv[np + 1]!],
    emissionS: useTime ? t : null,
    emissionSdS: useTime ? Math.sqrt(inv[np * np - 1]!) : null,
    chi2,
    dof: nObs - np,
    residuals,
    arrivalNormalized,
    converged,
  };
}

/** Stations whose bearing misses by more than the threshold, points away from the fix, or whose arrival time disagrees. */
function violators(sol: Solved, s: SolverSettings): string[] {
  const out = new Set<string>();
  for (const r of sol.residuals) if (Math.abs(r.normalized) > s.outlierSigma || r.alongM <= 0) out.add(r.station);
  for (const [station, z] of sol.arrivalNormalized) if (Math.abs(z) > s.outlierSigma) out.add(station);
  return [...out];
}

function finish(
  sol: Solved,
  lines: readonly BearingLine[],
  arrivals: readonly Arrival[],
  dropped: string[],
  extra: FixFlag[],
  ok: boolean,
): FixSolution {
  const flags: FixFlag[] = [...extra];
  if (arrivals.length >= 2) flags.push('time-differences');
  if (sol.dof === 0) flags.push('no-redundancy');
  if (!sol.converged) flags.push('no-convergence');
  const rms = Math.sqrt(sol.residuals.reduce((a, r) => a + r.missM * r.missM, 0) / sol.residuals.length);
  return {
    ok,
    east: sol.east,
    north: sol.north,
    up: sol.up,
    cov: sol.cov,
    emissionS: sol.emissionS,
    emissionSdS: sol.emissionSdS,
    used: lines.map((l) => l.station),
    dropped,
    residualM: rms,
    chi2: sol.chi2,
    dof: sol.dof,
    crossingDeg: largestCrossingDeg(lines),
    residuals: sol.residuals,
    flags,
  };
}

function failed(lines: readonly BearingLine[], flag: FixFlag): FixSolution {
  return {
    ok: false,
    east: NaN,
    north: NaN,
    up: NaN,
    cov: [NaN, NaN, NaN],
    emissionS: null,
    emissionSdS: null,
    used: lines.map((l) => l.station),
    dropped: [],
    residualM: NaN,
    chi2: NaN,
    dof: 0,
    crossingDeg: largestCrossingDeg(lines),
    residuals: [],
    flags: [flag],
  };
}

interface Candidate {
  sol: Solved;
  lines: BearingLine[];
  arrivals: Arrival[];
  dropped: string[];
}

/**
 * Leave each station out in turn; keep the subset that fits cleanly and whose left-out
 * station fails at that fix. Recurse (greedily, by the smallest chi-square per degree of
 * freedom) while at least three stations would remain.
 */
function leaveOneOut(lines: readonly BearingLine[], arrivals: readonly Arrival[], s: SolverSettings, dropped: string[]): Candidate | null {
  if (lines.length < 4) return null;
  let clean: Candidate | null = null;
  let fallback: Candidate | null = null;
  const score = (c: Candidate): number => c.sol.chi2 / Math.max(1, c.sol.dof);
  for (const left of lines) {
    const subLines = lines.filter((l) => l !== left);
    if (largestCrossingDeg(subLines) < s.minCrossingDeg) continue;
    const subArrivals = arrivals.filter((a) => a.station !== left.station);
    const sol = solveOnce(subLines, subArrivals, s);
    if (sol === null) continue;
    const cand: Candidate = { sol, lines: subLines, arrivals: subArrivals, dropped: [...dropped, left.station] };
    const leftRes = residualOf(left, sol.east, sol.north, sol.up, s);
    const leftFails = Math.abs(leftRes.normalized) > s.outlierSigma || leftRes.alongM <= 0;
    if (!leftFails) continue;
    if (violators(sol, s).length === 0) {
      if (clean === null || score(cand) < score(clean)) clean = cand;
    } else if (fallback === null || score(cand) < score(fallback)) {
      fallback = cand;
    }
  }
  if (clean !== null) return clean;
  if (fallback !== null) return leaveOneOut(fallback.lines, fallback.arrivals, s, fallback.dropped);
  return null;
}

/** Fix one call heard at several stations (at least two bearing lines). */
export function fixPosition(lines: readonly BearingLine[], arrivals: readonly Arrival[], s: SolverSettings): FixSolution {
  if (lines.length < 2) return failed(lines, 'poor-geometry');
  if (largestCrossingDeg(lines) < s.minCrossingDeg) return failed(lines, 'poor-geometry');
  const sol = solveOnce(lines, arrivals, s);
  if (sol === null) return failed(lines, 'poor-geometry');
  const bad = violators(sol, s);
  if (bad.length === 0) return finish(sol, lines, arrivals, [], [], true);
  const better = leaveOneOut(lines, arrivals, s, []);
  if (better !== null) return finish(better.sol, better.lines, better.arrivals, better.dropped, ['outlier-dropped'], true);
  if (sol.residuals.some((r) => r.alongM <= 0)) return { ...finish(sol, lines, arrivals, [], ['behind-station'], false) };
  return finish(sol, lines, arrivals, [], ['inconsistent'], true);
}

/**
 * Accuracy of a scan against the truth of a rendered scene: a pure scorer (hop estimates and
 * truth in, figures out).
 *
 * - A hop counts as voiced when at least one source of the truth is active at its time
 *   (the truth step nearest the centre of its frame). Its error is the angle between the
 *   hop's strongest direction and the nearest active source, on the circle of azimuths
 *   (taken modulo the array's mirror where it flips azimuth: a pair or line along any axis, an
 *   upright planar array; the records name its axis). A voiced hop
 *   without a direction is a miss: it counts against the within-X shares.
 * - Median and 90th percentile are taken over the voiced hops that gave a direction.
 * - Delay errors per pair are measured on hops where one fixed source is the only one
 *   active and the hop gave a direction: estimate minus the far-field delay of the true
 *   direction, (p_a - p_b) . u / c (interface.md), RMS over those hops, and RMS over the
 *   hops whose direction lay within DELAY_GATE_DEG of the truth: the Cramer-Rao bound speaks
 *   of that small-error regime, not of gross errors (a wrong peak), which the shares count.
 */
import type { ArrayGeometry, MicPair } from '../geometry/array-geometry.js';
import type { MirrorKind } from '../geometry/array-mirror.js';
import { mirrorImageDeg } from '../geometry/array-mirror.js';
import { dot, sub, unitFromAzEl, wrapDeg } from '../geometry/vec3.js';
import type { TruthIndex, TruthRecord } from './truth.js';

/** What the scorer needs of a hop (a frame record has all of it). */
export interface HopEstimate {
  readonly time_s: number;
  readonly azimuth_deg: number | null;
  readonly tdoa_s: readonly (number | null)[];
  readonly mirror?: MirrorKind | null;
  readonly mirror_axis_deg?: number;
}

export const WITHIN_DEG = [2, 5, 10] as const;
/** Hops with a direction this close to the truth (degrees) count for the small-error delay RMS. */
export const DELAY_GATE_DEG = 10;

export interface AngleFigures {
  /** Hops with at least one active source. */
  voicedHops: number;
  /** Voiced hops that gave a direction. */
  estimatedHops: number;
  /** Share of voiced hops whose direction lies within each of WITHIN_DEG of an active source. */
  within: { deg: number; share: number }[];
  /** Median and 90th-percentile error (degrees) over the estimated voiced hops; null when none. */
  medianDeg: number | null;
  p90Deg: number | null;
}

export interface SourceFigures extends AngleFigures {
  source: string;
  fixed: boolean;
}

export interface PairDelayFigures {
  source: string;
  pair: MicPair;
  /** Hops with a delay for this pair, and the RMS error over them (s). */
  hops: number;
  rmsS: number;
  /** Of these, the hops whose direction lay within DELAY_GATE_DEG, and their RMS error (s). */
  gatedHops: number;
  gatedRmsS: number | null;
  /** Cramer-Rao bound on the delay's standard deviation (s), when the caller could give one. */
  boundS: number | null;
  /** gatedRmsS / boundS. */
  ratio: number | null;
}

export interface AccuracyReport extends AngleFigures {
  hops: number;
  /** Per source, over the hops where it was the only source active. */
  sources: SourceFigures[];
  /** Delay errors of fixed sources heard alone, per source and pair. */
  delays: PairDelayFigures[];
}

export interface ScoreSetup {
  geometry: ArrayGeometry;
  pairs: readonly MicPair[];
  speedOfSound: number;
  /** Standard deviation bound (s) for a fixed source's pair, or null when unknown. */
  delayBound?: (source: string, pairIndex: number) => number | null;
}

/**
 * The axis (degrees) of a record's azimuth mirror, or null when its azimuth has none: the
 * record's mirror_axis_deg; records written before it existed named only 'front-back', which
 * was then always the pair of interface.md along x (axis 90).
 */
export function mirrorAxisOf(rec: { readonly mirror?: MirrorKind | null; readonly mirror_axis_deg?: number }): number | null {
  if (rec.mirror_axis_deg !== undefined) return rec.mirror_axis_deg;
  return rec.mirror === 'front-back' ? 90 : null;
}

/**
 * Angle between an estimated and a true azimuth, degrees in [0, 180]; with a mirror axis, the
 * smaller angle to the truth or to its mirror image 2 axis - truth (for an estimate on the
 * reported side this is the angle between the two folded onto that side).
 */
export function azimuthError(estimated: number, truth: number, mirrorAxisDeg: number | null): number {
  const direct = Math.abs(wrapDeg(estimated - truth));
  if (mirrorAxisDeg === null) return direct;
  return Math.min(direct, Math.abs(wrapDeg(estimated - mirrorImageDeg(truth, mirrorAxisDeg))));
}

/** Sorted-sample quantile by nearest rank (common practice, no source). */
export function quantile(sorted: readonly number[], q: number): number | null {
  if (sorted.length === 0) return null;
  const rank = Math.max(1, Math.ceil(q * sorted.length));
  return sorted[rank - 1]!;
}

/** Median: the middle value, or the mean of the two middle values. */
export function median(sorted: readonly number[]): number | null {
  const n = sorted.length;
  if (n === 0) return null;
  return n % 2 ? sorted[(n - 1) / 2]! : (sorted[n / 2 - 1]! + sorted[n / 2]!) / 2;
}

class AngleTally {
  voiced = 0;
  private readonly errors: number[] = [];

  add(error: number | null): void {
    this.voiced++;
    if (error !== null) this.errors.push(error);
  }

  figures(): AngleFigures {
    const sorted = this.errors.slice().sort((a, b) => a - b);
    return {
      voicedHops: this.voiced,
      estimatedHops: sorted.length,
      within: WITHIN_DEG.map((deg) => ({ deg, share: this.voiced ? sorted.filter((e) => e <= deg).length / this.voiced : 0 })),
      medianDeg: median(sorted),
      p90Deg: quantile(sorted, 0.9),
    };
  }
}

/** The far-field delay of each pair for a true direction (interface.md: (p_a - p_b) . u / c). */
export function trueDelays(rec: TruthRecord, setup: ScoreSetup): number[] {
  const u = unitFromAzEl(rec.azimuth_deg, rec.elevation_deg);
  const mics = setup.geometry.mics;
  return setup.pairs.map(([a, b]) => dot(sub(mics[a]!.position, mics[b]!.position), u) / setup.speedOfSound);
}

export function scoreHops(hops: readonly HopEstimate[], truth: TruthIndex, setup: ScoreSetup): AccuracyReport {
  const all = new AngleTally();
  const fixed = new Map(truth.sources.map((s) => [s.name, s.fixed]));
  const alone = new Map(truth.sources.map((s) => [s.name, new AngleTally()]));
  const P = setup.pairs.length;
  const sq = new Map<string, { n: Int32Array; sum: Float64Array; gn: Int32Array; gsum: Float64Array }>();
  for (const h of hops) {
    const axis = mirrorAxisOf(h);
    const active = truth.activeAt(h.time_s);
    if (active.length === 0) continue;
    let err: number | null = null;
    if (h.azimuth_deg !== null) {
      err = Infinity;
      for (const r of active) err = Math.min(err, azimuthError(h.azimuth_deg, r.azimuth_deg, axis));
    }
    all.add(err);
    if (active.length !== 1) continue;
    const only = active[0]!;
    alone.get(only.source)!.add(err);
    if (err === null || !fixed.get(only.source)) continue;
    let acc = sq.get(only.source);
    if (!acc) sq.set(only.source, (acc = { n: new Int32Array(P), sum: new Float64Array(P), gn: new Int32Array(P), gsum: new Float64Array(P) }));
    const expected = trueDelays(only, setup);
    for (let p = 0; p < P; p++) {
      const t = h.tdoa_s[p];
      if (t === null || t === undefined) continue;
      const e2 = (t - expected[p]!) ** 2;
      acc.n[p]!++;
      acc.sum[p]! += e2;
      if (err <= DELAY_GATE_DEG) {
        acc.gn[p]!++;
        acc.gsum[p]! += e2;
      }
    }
  }
  const delays: PairDelayFigures[] = [];
  for (const s of truth.sources) {
    const acc = sq.get(s.name);
    if (!acc) continue;
    setup.pairs.forEach((pair, p) => {
      if (acc.n[p] === 0) return;
      const rmsS = Math.sqrt(acc.sum[p]! / acc.n[p]!);
      const gatedHops = acc.gn[p]!;
      const gatedRmsS = gatedHops ? Math.sqrt(acc.gsum[p]! / gatedHops) : null;
      const boundS = setup.delayBound?.(s.name, p) ?? null;
      const ratio = boundS && gatedRmsS !== null ? gatedRmsS / boundS : null;
      delays.push({ source: s.name, pair, hops: acc.n[p]!, rmsS, gatedHops, gatedRmsS, boundS, ratio });
    });
  }
  return {
    hops: hops.length,
    ...all.figures(),
    sources: truth.sources.map((s) => ({ source: s.name, fixed: s.fixed, ...alone.get(s.name)!.figures() })),
    delays,
  };
}

/**
 * The report's second pass: every call and gap of the selection into bounded bins, so memory
 * does not grow with the length of the logs. Pure.
 * - the time plot: TIME_BINS bins over the span; per bin and series at most POINTS_PER_BIN
 *   calls kept (reservoir sampling with a fixed seed: a uniform sample of the bin's calls,
 *   the same on every run), so a week draws as many dots as a busy hour;
 * - lost capture per time bin (seconds), from the gap records;
 * - the rose: calls per ROSE_SECTORS sectors of angle, per series;
 * - calls per rate bin (hour, or minute for spans under two hours), per series;
 * - per track: calls, first and last, circular sums (mean and spread), confidence, elevation.
 * A series is one of the MAX_SERIES tracks with the most calls, or all other tracks together.
 */
import { seededUniform } from '../util/seeded-uniform.js';
import { wrap360, wrapDeg } from '../geometry/vec3.js';
import { CircularAccumulator } from '../track/circular.js';
import type { CallItem } from './log-records.js';

export const TIME_BINS = 720;
export const POINTS_PER_BIN = 2;
export const ROSE_SECTORS = 36;
/** Tracks drawn in their own colour; the rest share one grey series. */
export const MAX_SERIES = 12;

export type AngleKind = 'bearing' | 'azimuth';

export interface TrackStats {
  readonly id: number;
  calls: number;
  firstS: number;
  lastS: number;
  readonly angles: CircularAccumulator;
  confidenceSum: number;
  elevationSum: number;
  elevationCount: number;
}

export interface RateBins {
  /** Width of one bin, seconds (3600 for calls per hour). */
  readonly widthS: number;
  readonly startS: number;
  readonly count: number;
}

/** Bin widths for spans under two hours, seconds: the smallest giving at most 60 bins. */
const SHORT_WIDTHS_S = [1, 2, 5, 10, 15, 30, 60, 120, 300, 600];

/** Bins for calls per hour (spans of two hours or more: whole hours, at most ~200 bins), or finer for short spans. */
export function rateBinsFor(startS: number, endS: number, absolute: boolean): RateBins {
  const span = endS - startS;
  const widthS = span >= 7200 ? 3600 * Math.max(1, Math.ceil(span / 3600 / 200)) : SHORT_WIDTHS_S.find((w) => span / w <= 60) ?? 600;
  // UTC logs: bins start on the clock's hour (or minute), so a bar is "21:00 to 22:00".
  const first = absolute ? Math.floor(startS / widthS) * widthS : startS;
  return { widthS, startS: first, count: Math.max(1, Math.ceil((endS - first) / widthS)) };
}

export class NightBins {
  readonly binS: number;
  /** Series index of a track id (tracks beyond MAX_SERIES: the last series, "other"). */
  readonly seriesOf: ReadonlyMap<number, number>;
  readonly seriesCount: number;
  readonly hasOther: boolean;
  /** Per series: TIME_BINS * POINTS_PER_BIN times and angles; slots beyond `seen` unused. */
  readonly pointT: Float64Array[];
  readonly pointA: Float64Array[];
  /** Per series: the calls seen per time bin. */
  readonly seen: Uint32Array[];
  readonly rose: Uint32Array[];
  readonly rate: RateBins;
  readonly rateCounts: Uint32Array[];
  /** Lost capture per time bin, seconds. */
  readonly lostS = new Float64Array(TIME_BINS);
  lostTotalS = 0;
  gapCount = 0;
  readonly gapReasons = new Map<string, number>();
  readonly tracks = new Map<number, TrackStats>();
  calls = 0;
  private readonly random = seededUniform(0x6a7e);

  constructor(
    readonly startS: number,
    readonly endS: number,
    readonly absolute: boolean,
    /** Track ids, most calls first. */
    tracksByCalls: readonly number[],
    readonly angle: AngleKind,
  ) {
    this.binS = (endS - startS) / TIME_BINS;
    const own = tracksByCalls.slice(0, MAX_SERIES);
    this.hasOther = tracksByCalls.length > MAX_SERIES;
    this.seriesCount = own.length + (this.hasOther ? 1 : 0);
    this.seriesOf = new Map(own.map((id, i) => [id, i]));
    const n = this.seriesCount;
    this.pointT = Array.from({ length: n }, () => new Float64Array(TIME_BINS * POINTS_PER_BIN));
    this.pointA = Array.from({ length: n }, () => new Float64Array(TIME_BINS * POINTS_PER_BIN));
    this.seen = Array.from({ length: n }, () => new Uint32Array(TIME_BINS));
    this.rose = Array.from({ length: n }, () => new Uint32Array(ROSE_SECTORS));
    this.rate = rateBinsFor(startS, endS, absolute);
    this.rateCounts = Array.from({ length: n }, () => new Uint32Array(this.rate.count));
  }

  /** The plotted angle of a call: its compass bearing in [0, 360), or its azimuth in (-180, 180]. */
  angleOf(c: CallItem): number {
    return this.angle === 'bearing' && c.bearingDeg !== null ? wrap360(c.bearingDeg) : wrapDeg(c.azimuthDeg);
  }

  private timeBin(t: number): number {
    return Math.min(TIME_BINS - 1, Math.max(0, Math.floor((t - this.startS) / this.binS)));
  }

  addCall(c: CallItem): void {
    this.calls++;
    const a = this.angleOf(c);
    const s = this.seriesOf.get(c.track) ?? this.seriesCount - 1;
    const bin = this.timeBin(c.timeS);
    const n = this.seen[s]![bin]!;
    const slot = n < POINTS_PER_BIN ? n : Math.floor(this.random() * (n + 1));
    if (slot < POINTS_PER_BIN) {
      this.pointT[s]![bin * POINTS_PER_BIN + slot] = c.timeS;
      this.pointA[s]![bin * POINTS_PER_BIN + slot] = a;
    }
    this.seen[s]![bin] = n + 1;
    const sector = Math.floor(wrap360(a) / (360 / ROSE_SECTORS)) % ROSE_SECTORS;
    this.rose[s]![sector]!++;
    const r = Math.floor((c.timeS - this.rate.startS) / this.rate.widthS);
    this.rateCounts[s]![Math.min(this.rate.count - 1, Math.max(0, r))]!++;

    let t = this.tracks.get(c.track);
    if (!t) {
      t = { id: c.track, calls: 0, firstS: c.timeS, lastS: c.timeS, angles: new CircularAccumulator(), confidenceSum: 0, elevationSum: 0, elevationCount: 0 };
      this.tracks.set(c.track, t);
    }
    t.calls++;
    t.firstS = Math.min(t.firstS, c.timeS);
    t.lastS = Math.max(t.lastS, c.timeS);
    t.angles.add(a);
    t.confidenceSum += c.confidence;
    if (c.elevationDeg !== null) {
      t.elevationSum += c.elevationDeg;
      t.elevationCount++;
    }
  }

  /** A stretch of lost capture (already clipped to the span). */
  addGap(startS: number, endS: number, reason: string): void {
    this.gapCount++;
    this.lostTotalS += endS - startS;
    if (this.gapReasons.has(reason) || this.gapReasons.size < 8) this.gapReasons.set(reason, (this.gapReasons.get(reason) ?? 0) + 1);
    const a = Math.max(startS, this.startS);
    const b = Math.min(endS, this.endS);
    if (b <= a) {
      // A zero-length gap still marks its bin, so it shows.
      if (b === a) this.lostS[this.timeBin(a)] = Math.max(this.lostS[this.timeBin(a)]!, 1e-9);
      return;
    }
    for (let i = this.timeBin(a); i <= this.timeBin(b); i++) {
      const lo = this.startS + i * this.binS;
      const hi = lo + this.binS;
      this.lostS[i]! += Math.max(0, Math.min(b, hi) - Math.max(a, lo));
    }
  }

  /** The kept points of a series, in time order. */
  points(series: number): { t: number; a: number }[] {
    const out: { t: number; a: number }[] = [];
    for (let bin = 0; bin < TIME_BINS; bin++) {
      const n = Math.min(POINTS_PER_BIN, this.seen[series]![bin]!);
      for (let k = 0; k < n; k++) out.push({ t: this.pointT[series]![bin * POINTS_PER_BIN + k]!, a: this.pointA[series]![bin * POINTS_PER_BIN + k]! });
    }
    return out.sort((p, q) => p.t - q.t);
  }
}

/**
 * Tracks and events of a scan set against the sources of a scene's truth: which source each
 * event belongs to (the active source nearest its azimuth), which source each track follows
 * (the one most of its events belong to), and how far the track's mean lies from that
 * source's true direction over the times of the same events (all of the track's events, so
 * that the error is that of the mean the table shows). Tracks the tracker confirmed but that
 * never carried an event are listed too (from the tracker's summary), so none goes missing.
 * Pure: records in, rows out.
 */
import { mirrorImageDeg } from '../geometry/array-mirror.js';
import { wrapDeg } from '../geometry/vec3.js';
import type { EventRecord } from '../records/record-types.js';
import { circularMeanDeg, circularStdDeg } from '../track/circular.js';
import type { TrackSummary } from '../track/types.js';
import { azimuthError, mirrorAxisOf } from './score.js';
import type { TruthIndex, TruthRecord, TruthSource } from './truth.js';

export interface TrackMatch {
  track: number;
  events: number;
  /**
   * Circular mean azimuth of the track's events, degrees; for a track without events, the
   * mean of the hops the tracker assigned to it (TrackSummary).
   */
  azimuthDeg: number;
  /** Circular standard deviation of the events' azimuths about their mean (of the hops, for a track without events), degrees. */
  spreadDeg: number;
  /** The source most of the track's events belong to; null when none was active during them (or it has none). */
  source: string | null;
  /** Events of the track that belong to that source. */
  matchedEvents: number;
  /**
   * Circular mean of that source's true azimuth at the times of all of the track's events
   * (the same events azimuthDeg averages), degrees; null without a source.
   */
  truthAzimuthDeg: number | null;
  /** azimuthDeg - truthAzimuthDeg, signed, degrees (against the nearer mirror image where the array has a mirror). */
  errorDeg: number | null;
}

export interface SourceTally {
  source: string;
  fixed: boolean;
  /** Calls as they reach the array (runs of active truth steps). */
  calls: number;
  /** Events whose nearest active source it is. */
  events: number;
  /** Tracks that follow it. */
  tracks: number[];
}

export interface TrackComparison {
  tracks: TrackMatch[];
  sources: SourceTally[];
  /** Events during which no source of the truth was active. */
  unmatchedEvents: number;
}

function truthDuring(truth: TruthIndex, e: EventRecord, step: number): TruthRecord[] {
  const out: TruthRecord[] = [];
  for (let t = e.start_s; t <= e.end_s + 1e-9; t += step) out.push(...truth.activeAt(t));
  return out;
}

/** The source an event belongs to and that source's mean azimuth during it. */
export function eventSource(truth: TruthIndex, e: EventRecord, step: number): { source: string; azimuthDeg: number } | null {
  const by = new Map<string, number[]>();
  for (const r of truthDuring(truth, e, step)) {
    let list = by.get(r.source);
    if (!list) by.set(r.source, (list = []));
    list.push(r.azimuth_deg);
  }
  let best: { source: string; azimuthDeg: number } | null = null;
  let bestErr = Infinity;
  for (const [source, azimuths] of by) {
    const az = circularMeanDeg(azimuths);
    const err = azimuthError(e.azimuth_deg, az, mirrorAxisOf(e));
    if (err < bestErr) {
      bestErr = err;
      best = { source, azimuthDeg: az };
    }
  }
  return best;
}

/**
 * A source's true azimuth over [t0, t1]: the circular mean of its records inside; when it was
 * not active then, interpolated (on the circle) between its nearest records before and after,
 * or the nearest one at either end. For a fixed source this is its one direction.
 */
export function truthAzimuthDuring(source: TruthSource, t0: number, t1: number): number {
  const recs = source.records;
  let lo = 0;
  let hi = recs.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (recs[mid]!.time_s < t0) lo = mid + 1;
    else hi = mid;
  }
  const inside: number[] = [];
  for (let i = lo; i < recs.length && recs[i]!.time_s <= t1; i++) inside.push(recs[i]!.azimuth_deg);
  if (inside.length > 0) return circularMeanDeg(inside);
  const before = recs[lo - 1];
  const after = recs[lo];
  if (before === undefined) return after!.azimuth_deg;
  if (after === undefined) return before.azimuth_deg;
  const t = (t0 + t1) / 2;
  const f = Math.min(1, Math.max(0, (t - before.time_s) / (after.time_s - before.time_s)));
  return wrapDeg(before.azimuth_deg + f * wrapDeg(after.azimuth_deg - before.azimuth_deg));
}

/** Circular standard deviation (Mardia and Jupp), capped at 180 degrees for a uniform spread. */
function circularSpread(anglesDeg: readonly number[]): number {
  return anglesDeg.length < 2 ? 0 : Math.min(180, circularStdDeg(anglesDeg));
}

/**
 * Compare events with the truth. `summary` (the tracker's, optional) adds a row for every
 * confirmed track that carried no event.
 */
export function compareTracks(events: readonly EventRecord[], truth: TruthIndex, step: number, summary: readonly TrackSummary[] = []): TrackComparison {
  const byTrack = new Map<number, EventRecord[]>();
  for (const e of events) {
    let list = byTrack.get(e.track);
    if (!list) byTrack.set(e.track, (list = []));
    list.push(e);
  }
  const sourceEvents = new Map<string, number>();
  let unmatchedEvents = 0;
  const tracks: TrackMatch[] = [];
  for (const [track, list] of [...byTrack].sort((a, b) => a[0] - b[0])) {
    const matches = list.map((e) => ({ e, m: eventSource(truth, e, step) }));
    const votes = new Map<string, number>();
    for (const { m } of matches) {
      if (!m) {
        unmatchedEvents++;
        continue;
      }
      sourceEvents.set(m.source, (sourceEvents.get(m.source) ?? 0) + 1);
      votes.set(m.source, (votes.get(m.source) ?? 0) + 1);
    }
    let source: string | null = null;
    let top = 0;
    for (const [name, n] of votes) if (n > top) [source, top] = [name, n];
    const azimuths = list.map((e) => e.azimuth_deg);
    const mean = circularMeanDeg(azimuths);
    const src = source === null ? undefined : truth.sources.find((s) => s.name === source);
    let truthAz: number | null = null;
    let error: number | null = null;
    if (src !== undefined) {
      truthAz = circularMeanDeg(list.map((e) => truthAzimuthDuring(src, e.start_s, e.end_s)));
      error = wrapDeg(mean - truthAz);
      const axis = mirrorAxisOf(list[0]!);
      if (axis !== null) {
        const image = mirrorImageDeg(truthAz, axis);
        if (azimuthError(mean, image, null) < Math.abs(error)) [truthAz, error] = [image, wrapDeg(mean - image)];
      }
    }
    tracks.push({
      track,
      events: list.length,
      azimuthDeg: mean,
      spreadDeg: circularSpread(azimuths),
      source,
      matchedEvents: top,
      truthAzimuthDeg: truthAz,
      errorDeg: error,
    });
  }
  for (const t of summary) {
    if (byTrack.has(t.track)) continue;
    tracks.push({ track: t.track, events: 0, azimuthDeg: t.azimuthDeg, spreadDeg: t.spreadDeg, source: null, matchedEvents: 0, truthAzimuthDeg: null, errorDeg: null });
  }
  tracks.sort((a, b) => a.track - b.track);
  const sources = truth.sources.map((s) => ({
    source: s.name,
    fixed: s.fixed,
    calls: s.calls.length,
    events: sourceEvents.get(s.name) ?? 0,
    tracks: tracks.filter((t) => t.source === s.name).map((t) => t.track),
  }));
  return { tracks, sources, unmatchedEvents };
}

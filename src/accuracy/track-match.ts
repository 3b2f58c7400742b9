/**
 * Tracks and events of a scan set against the sources of a scene's truth: which source each
 * event belongs to (the active source nearest its azimuth), which source each track follows
 * (the one most of its events belong to), and how far the track's events lie from it.
 * Pure: records in, rows out.
 */
import { circularStdDeg } from '../track/circular.js';
import { wrapDeg } from '../geometry/vec3.js';
import type { EventRecord } from '../records/record-types.js';
import { circularMeanDeg } from '../track/circular.js';
import { azimuthError, mirrorAxisOf } from './score.js';
import type { TruthIndex, TruthRecord } from './truth.js';

export interface TrackMatch {
  track: number;
  events: number;
  /** Circular mean azimuth of the track's events, degrees. */
  azimuthDeg: number;
  /** Circular standard deviation of the events' azimuths about their mean, degrees. */
  spreadDeg: number;
  /** The source most of the track's events belong to; null when none was active during them. */
  source: string | null;
  /** Events of the track that belong to that source. */
  matchedEvents: number;
  /** Mean true azimuth of that source over the matched events, and the track's error from it (degrees, signed). */
  truthAzimuthDeg: number | null;
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

/** Circular standard deviation (Mardia and Jupp), capped at 180 degrees for a uniform spread. */
function circularSpread(anglesDeg: readonly number[]): number {
  return anglesDeg.length < 2 ? 0 : Math.min(180, circularStdDeg(anglesDeg));
}

export function compareTracks(events: readonly EventRecord[], truth: TruthIndex, step: number): TrackComparison {
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
    const votes = new Map<string, { n: number; truth: number[]; est: number[] }>();
    for (const { e, m } of matches) {
      if (!m) {
        unmatchedEvents++;
        continue;
      }
      sourceEvents.set(m.source, (sourceEvents.get(m.source) ?? 0) + 1);
      let v = votes.get(m.source);
      if (!v) votes.set(m.source, (v = { n: 0, truth: [], est: [] }));
      v.n++;
      v.truth.push(m.azimuthDeg);
      v.est.push(e.azimuth_deg);
    }
    let source: string | null = null;
    let top = 0;
    for (const [name, v] of votes) if (v.n > top) [source, top] = [name, v.n];
    const azimuths = list.map((e) => e.azimuth_deg);
    const v = source ? votes.get(source)! : null;
    const truthAz = v ? circularMeanDeg(v.truth) : null;
    tracks.push({
      track,
      events: list.length,
      azimuthDeg: circularMeanDeg(azimuths),
      spreadDeg: circularSpread(azimuths),
      source,
      matchedEvents: top,
      truthAzimuthDeg: truthAz,
      errorDeg: v && truthAz !== null ? wrapDeg(circularMeanDeg(v.est) - truthAz) : null,
    });
  }
  const sources = truth.sources.map((s) => ({
    source: s.name,
    fixed: s.fixed,
    calls: s.calls.length,
    events: sourceEvents.get(s.name) ?? 0,
    tracks: tracks.filter((t) => t.source === s.name).map((t) => t.track),
  }));
  return { tracks, sources, unmatchedEvents };
}

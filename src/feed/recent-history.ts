/**
 * What a viewer that joins late is told right after hello: the recent events and gaps (the
 * last MAX_EVENTS events, none older than WINDOW_S of stream time) and the tracks heard in that
 * window with their last direction and their calls. Kept as the records pass by, bounded in
 * size whatever the length of the run. Pure: records in, a message out.
 */
import type { GapRecord } from '../records/gap-record.js';
import type { EventRecord, FrameRecord } from '../records/record-types.js';

/** Most events in a catch-up. */
export const MAX_EVENTS = 200;
/** Oldest event in a catch-up, seconds of stream time before the newest record. */
export const WINDOW_S = 600;
/** Most gaps in a catch-up. */
const MAX_GAPS = 50;
/** Most tracks remembered (the most recently heard ones stay). */
const MAX_TRACKS = 64;
/** A track whose last hop is at most this old (stream seconds) counts as live. */
export const LIVE_S = 5;

/** A track as the catch-up tells it. */
export interface TrackSummary {
  track: number;
  azimuth_deg: number;
  elevation_deg: number | null;
  bearing_deg?: number;
  /** Stream time the track was last heard (a hop or an event's end). */
  last_s: number;
  /** Events of this track since the feed started. */
  calls: number;
  /** Heard in a hop within the last LIVE_S seconds. */
  live: boolean;
}

export interface CatchUpMessage {
  type: 'catch_up';
  /** Stream time of the newest record. */
  now_s: number;
  window_s: number;
  /** Oldest first, as they happened. */
  events: EventRecord[];
  gaps: GapRecord[];
  tracks: TrackSummary[];
}

interface TrackState {
  azimuthDeg: number;
  elevationDeg: number | null;
  bearingDeg: number | undefined;
  lastS: number;
  lastHopS: number;
  calls: number;
}

export class RecentHistory {
  private readonly events: EventRecord[] = [];
  private readonly gaps: GapRecord[] = [];
  private readonly tracks = new Map<number, TrackState>();
  private nowS = -Infinity;
  private headingDeg: number | null;

  constructor(headingDeg: number | null = null) {
    this.headingDeg = headingDeg;
  }

  private track(id: number): TrackState {
    let t = this.tracks.get(id);
    if (!t) {
      if (this.tracks.size >= MAX_TRACKS) {
        let oldest: number | null = null;
        for (const [k, v] of this.tracks) if (oldest === null || v.lastS < this.tracks.get(oldest)!.lastS) oldest = k;
        if (oldest !== null) this.tracks.delete(oldest);
      }
      t = { azimuthDeg: 0, elevationDeg: null, bearingDeg: undefined, lastS: -Infinity, lastHopS: -Infinity, calls: 0 };
      this.tracks.set(id, t);
    }
    return t;
  }

  private bearing(az: number): number | undefined {
    return this.headingDeg === null ? undefined : Math.round((((az + this.headingDeg) % 360) + 360) % 360 * 100) / 100;
  }

  frame(rec: FrameRecord): void {
    this.nowS = Math.max(this.nowS, rec.time_s);
    for (const s of rec.sources ?? []) {
      if (typeof s.track !== 'number') continue;
      const t = this.track(s.track);
      t.azimuthDeg = s.azimuth_deg;
      t.elevationDeg = s.elevation_deg;
      t.bearingDeg = s.bearing_deg ?? this.bearing(s.azimuth_deg);
      t.lastS = rec.time_s;
      t.lastHopS = rec.time_s;
    }
  }

  event(rec: EventRecord): void {
    this.nowS = Math.max(this.nowS, rec.end_s);
    this.events.push(rec);
    if (this.events.length > MAX_EVENTS) this.events.shift();
    const t = this.track(rec.track);
    t.calls++;
    if (rec.end_s >= t.lastS) {
      t.azimuthDeg = rec.azimuth_deg;
      t.elevationDeg = rec.elevation_deg ?? null;
      t.bearingDeg = rec.bearing_deg ?? this.bearing(rec.azimuth_deg);
      t.lastS = rec.end_s;
    }
  }

  gap(rec: GapRecord): void {
    this.nowS = Math.max(this.nowS, rec.end_s);
    this.gaps.push(rec);
    if (this.gaps.length > MAX_GAPS) this.gaps.shift();
  }

  /** The catch-up for a viewer joining now; null when nothing has happened yet. */
  catchUp(): CatchUpMessage | null {
    if (!Number.isFinite(this.nowS)) return null;
    const since = this.nowS - WINDOW_S;
    const tracks: TrackSummary[] = [];
    for (const [id, t] of this.tracks) {
      if (t.lastS < since) continue;
      const s: TrackSummary = { track: id, azimuth_deg: t.azimuthDeg, elevation_deg: t.elevationDeg, last_s: t.lastS, calls: t.calls, live: this.nowS - t.lastHopS <= LIVE_S };
      if (t.bearingDeg !== undefined) s.bearing_deg = t.bearingDeg;
      tracks.push(s);
    }
    tracks.sort((a, b) => a.track - b.track);
    return {
      type: 'catch_up',
      now_s: this.nowS,
      window_s: WINDOW_S,
      events: this.events.filter((e) => e.end_s >= since),
      gaps: this.gaps.filter((g) => g.end_s >= since),
      tracks,
    };
  }
}

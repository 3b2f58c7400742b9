import { round } from './frame-record.js';

/**
 * A hole in a live stream, as a record in the event stream (JSON Lines): `gap` says why,
 * `start_s` and `end_s` are stream times (live stream time keeps step with the wall clock,
 * see stream-clock.ts, so end_s - start_s is the audio lost), `utc` is when it began.
 * Told apart from an event by its `gap` field (events have `track` and `azimuth_deg` instead).
 */
export interface GapRecord {
  gap: string;
  start_s: number;
  end_s: number;
  utc?: string;
}

export function gapRecord(startS: number, lostS: number, reason: string, utc?: string): GapRecord {
  const rec: GapRecord = { gap: reason, start_s: round(startS, 4), end_s: round(startS + lostS, 4) };
  if (utc !== undefined) rec.utc = utc;
  return rec;
}

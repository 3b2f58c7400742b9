/**
 * Event logs for position fixing: JSON Lines of EventRecord (interface.md) checked line by
 * line, then put on one time base with each station's clock offset. Pure: text in, records out.
 */
import { wrap360 } from '../geometry/vec3.js';
import { UsageError } from '../util/errors.js';
import type { EventRecord } from '../records/record-types.js';
import type { PlacedStation } from './stations.js';
import { parseUtcSeconds } from './time.js';

/** One event of one station, ready for matching. */
export interface StationEvent {
  station: string;
  /** Onset time in true seconds: since 1970 when `absolute`, else since the common stream start. */
  timeS: number;
  absolute: boolean;
  /** True time of the station's stream start (timeS - start_s), same base as timeS. */
  streamStartS: number;
  /** Compass bearing, degrees from true north. */
  bearingDeg: number;
  band: readonly [number, number] | null;
  /** Where the event came from, for messages and output (e.g. "north.jsonl:12"). */
  origin: string;
}

type Json = null | boolean | number | string | Json[] | { [key: string]: Json };

function bad(where: string, field: string, what: string): never {
  throw new UsageError(`${where}: field '${field}' ${what}`);
}

function finite(v: Json | undefined): v is number {
  return typeof v === 'number' && Number.isFinite(v);
}

/** Check one parsed JSON line as an EventRecord; `where` names file and line in messages. */
export function checkEventRecord(v: unknown, where: string): EventRecord {
  const o = v as Json;
  if (typeof o !== 'object' || o === null || Array.isArray(o)) {
    throw new UsageError(`${where}: not an event object (expected {"start_s": ..., "azimuth_deg": ...})`);
  }
  for (const f of ['start_s', 'end_s', 'azimuth_deg', 'spread_deg', 'confidence', 'track'] as const) {
    if (!finite(o[f])) bad(where, f, o[f] === undefined ? 'is missing: every event record needs it' : 'must be a number');
  }
  if (o.bearing_deg !== undefined && o.bearing_deg !== null && !finite(o.bearing_deg)) bad(where, 'bearing_deg', 'must be a number or null');
  if (o.utc !== undefined && (typeof o.utc !== 'string' || parseUtcSeconds(o.utc) === null)) {
    bad(where, 'utc', 'must be an ISO 8601 UTC time such as "2025-05-01T21:00:03.125Z"');
  }
  if (o.station !== undefined && typeof o.station !== 'string') bad(where, 'station', 'must be a string');
  if (o.band_hz !== undefined) {
    const b = o.band_hz;
    if (!Array.isArray(b) || b.length !== 2 || !finite(b[0]) || !finite(b[1]) || b[0] < 0 || b[1] < b[0]) {
      bad(where, 'band_hz', 'must be [low, high] in Hz with 0 <= low <= high');
    }
  }
  return o as unknown as EventRecord;
}

/**
 * Parse a JSON Lines event log. Blank lines are skipped. Each record belongs to `assigned`
 * (from a STATION=FILE argument) or else to its own `station` field; a record that names
 * another station than the one assigned is an error.
 */
export function parseEventLog(
  text: string,
  source: string,
  assigned: string | null,
  knownIds: ReadonlySet<string>,
): { station: string; record: EventRecord; origin: string }[] {
  const out: { station: string; record: EventRecord; origin: string }[] = [];
  const lines = text.split('\n');
  lines.forEach((raw, i) => {
    const line = raw.trim();
    if (line === '') return;
    const where = `${source} line ${i + 1}`;
    let parsed: unknown;
    try {
      parsed = JSON.parse(line);
    } catch {
      throw new UsageError(`${where}: not valid JSON; each line of an event log must be one JSON object`);
    }
    const record = checkEventRecord(parsed, where);
    let station = assigned;
    if (record.station !== undefined) {
      if (assigned !== null && record.station !== assigned) {
        bad(where, 'station', `is '${record.station}' but the file was given as ${assigned}=${source}; fix the log or the argument`);
      }
      station = record.station;
    }
    if (station === null) {
      bad(where, 'station', `is missing: give the log as STATION=${source} or add "station" to each record`);
    }
    if (!knownIds.has(station)) {
      bad(where, 'station', `'${station}' is not in the station file (known: ${[...knownIds].join(', ')})`);
    }
    out.push({ station, record, origin: `${source}:${i + 1}` });
  });
  return out;
}

/**
 * Put one station's records on the common time base and compass. Onset times become true
 * time (station time minus clock_offset_s): UTC when the station gives stream_start_utc or
 * the record carries utc, else seconds from the stream start. A record without bearing_deg
 * gets azimuth_deg + heading_deg; without a heading that is an error.
 */
export function toStationEvents(
  station: PlacedStation,
  records: readonly EventRecord[],
  origins?: readonly string[],
): StationEvent[] {
  return records.map((r, i) => {
    const origin = origins?.[i] ?? `${station.id} event ${i + 1}`;
    let timeS: number;
    let absolute: boolean;
    if (station.streamStartUtcS !== null) {
      timeS = station.streamStartUtcS + r.start_s;
      absolute = true;
    } else if (r.utc !== undefined) {
      const t = parseUtcSeconds(r.utc);
      if (t === null) bad(origin, 'utc', 'must be an ISO 8601 UTC time');
      timeS = t;
      absolute = true;
    } else {
      timeS = r.start_s;
      absolute = false;
    }
    let bearingDeg: number;
    if (r.bearing_deg !== undefined && r.bearing_deg !== null) {
      bearingDeg = r.bearing_deg;
    } else {
      if (station.headingDeg === null) {
        bad(origin, 'bearing_deg', `is missing and station '${station.id}' has no heading_deg: add heading_deg to the station file`);
      }
      bearingDeg = r.azimuth_deg + station.headingDeg;
    }
    bearingDeg = wrap360(bearingDeg);
    return {
      station: station.id,
      timeS: timeS - station.clockOffsetS,
      absolute,
      streamStartS: timeS - station.clockOffsetS - r.start_s,
      bearingDeg,
      band: r.band_hz ?? null,
      origin,
    };
  });
}

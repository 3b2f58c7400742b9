/**
 * What stations publish (src/sinks/mqtt-sink.ts), read back: an event message is
 * {"seq": N, "station": ID, ...event record}, a capture gap {"seq": N, "station": ID, "gap": why, ...};
 * the retained status is {"station": ID, "state": "online"|"offline", "utc": ..., ...}.
 * Pure: payload text in, a checked message or the reason it was not understood out.
 */
import { checkEventRecord } from '../locate/events.js';
import type { EventRecord } from '../records/record-types.js';
import { UsageError } from '../util/errors.js';

export type StationMessage =
  | { kind: 'event'; seq: number | null; record: EventRecord }
  | { kind: 'gap'; seq: number | null }
  | { kind: 'bad'; problem: string };

function parseObject(text: string): Record<string, unknown> | string {
  let v: unknown;
  try {
    v = JSON.parse(text);
  } catch {
    return 'not JSON';
  }
  if (typeof v !== 'object' || v === null || Array.isArray(v)) return 'not a JSON object';
  return v as Record<string, unknown>;
}

/** An event-topic message of station `id`. */
export function readStationMessage(text: string, id: string): StationMessage {
  const o = parseObject(text);
  if (typeof o === 'string') return { kind: 'bad', problem: o };
  if (o.station !== undefined && o.station !== id) return { kind: 'bad', problem: `it names station '${String(o.station)}' on the topic of '${id}'` };
  const seq = typeof o.seq === 'number' && Number.isSafeInteger(o.seq) && o.seq > 0 ? o.seq : null;
  if (o.gap !== undefined) return { kind: 'gap', seq };
  const { seq: _seq, ...rest } = o;
  try {
    return { kind: 'event', seq, record: checkEventRecord(rest, `message ${seq ?? '?'}`) };
  } catch (err) {
    return { kind: 'bad', problem: err instanceof UsageError ? err.message : String(err) };
  }
}

/** The state in a retained status message: true online, false offline, null when not understood (or empty: cleared). */
export function readStationState(text: string): boolean | null {
  const o = parseObject(text);
  if (typeof o === 'string') return null;
  return o.state === 'online' ? true : o.state === 'offline' ? false : null;
}

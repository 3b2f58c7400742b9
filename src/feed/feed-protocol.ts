/**
 * The messages of the WebSocket feed (protocol 1). Every message is one JSON text with a
 * `type` field. Server to viewer: hello (first, once), catch_up (right after hello when
 * anything has happened: recent-history.ts), frame, maps (to viewers that subscribe to them),
 * event, gap, status, pong. Viewer to server: ping, subscribe ({"frames": bool, "maps": bool}).
 * Pure: builds and reads messages, no I/O.
 */
import type { ArrayGeometry } from '../geometry/array-geometry.js';
import type { GapRecord } from '../records/gap-record.js';
import type { EventRecord, FrameRecord } from '../records/record-types.js';
import type { EvidenceMaps } from '../direction/evidence-map.js';
import type { CatchUpMessage } from './recent-history.js';

export const FEED_PROTOCOL = 1;

/** The geometry file JSON of interface.md, as the hello carries it. */
export interface GeometryJson {
  name: string;
  heading_deg?: number;
  mics: { channel: number; position_m: [number, number, number] }[];
}

/** Analysis settings shown to the viewer (sample rate, hop, station...): flat, snake_case keys. */
export type FeedSettings = Readonly<Record<string, string | number | boolean | null>>;

export interface HelloMessage {
  type: 'hello';
  protocol: typeof FEED_PROTOCOL;
  geometry: GeometryJson;
  settings: FeedSettings;
}

/** Sent about once a second to a viewer whose frames were dropped since the last one. */
export interface StatusMessage {
  type: 'status';
  /** Frames dropped for this viewer since it connected (slow link or slow viewer). */
  dropped_frames: number;
  clients: number;
}

export type ServerMessage =
  | HelloMessage
  | CatchUpMessage
  | MapsMessage
  | ({ type: 'frame' } & FrameRecord)
  | ({ type: 'event' } & EventRecord)
  | ({ type: 'gap' } & GapRecord)
  | StatusMessage
  | { type: 'pong'; id: string | number | null };

/**
 * The evidence of one hop (direction/evidence-map.ts), at most a few per second and only to
 * viewers that subscribe with "maps": true. time_s is the hop's, as in its frame record.
 */
export interface MapsMessage extends EvidenceMaps {
  type: 'maps';
  time_s: number;
}

/** What a viewer may send. Anything else is ignored (and reported through the server's log callback). */
export type ClientMessage = { type: 'ping'; id: string | number | null } | { type: 'subscribe'; frames: boolean; maps?: boolean };

/** The hello message for an array geometry and the analysis settings. */
export function helloFromGeometry(geometry: ArrayGeometry, settings: FeedSettings = {}): HelloMessage {
  const json: GeometryJson = {
    name: geometry.name,
    mics: geometry.mics.map((m) => ({ channel: m.channel, position_m: [m.position[0], m.position[1], m.position[2]] })),
  };
  if (geometry.headingDeg !== null) json.heading_deg = geometry.headingDeg;
  return { type: 'hello', protocol: FEED_PROTOCOL, geometry: json, settings: { ...settings } };
}

export function frameMessage(rec: FrameRecord): string {
  return JSON.stringify({ type: 'frame', ...rec });
}

export function mapsMessage(timeS: number, maps: EvidenceMaps): string {
  return JSON.stringify({ type: 'maps', time_s: timeS, ...maps });
}

export function eventMessage(rec: EventRecord): string {
  return JSON.stringify({ type: 'event', ...rec });
}

/** A stretch of live audio that capture lost: the gap record (records/gap-record.ts) with its type. */
export function gapMessage(gap: GapRecord): string {
  return JSON.stringify({ type: 'gap', ...gap });
}

/** Reads a viewer's message; returns the message or a one-line reason it was not understood. */
export function parseClientMessage(text: string): ClientMessage | { problem: string } {
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch {
    return { problem: 'not JSON' };
  }
  if (typeof value !== 'object' || value === null || Array.isArray(value)) return { problem: 'not a JSON object' };
  const obj = value as Record<string, unknown>;
  if (obj.type === 'ping') {
    const id = obj.id;
    return { type: 'ping', id: typeof id === 'string' || typeof id === 'number' ? id : null };
  }
  if (obj.type === 'subscribe') {
    if (typeof obj.frames !== 'boolean') return { problem: 'subscribe needs "frames": true or false' };
    if (obj.maps !== undefined && typeof obj.maps !== 'boolean') return { problem: 'subscribe: "maps" must be true or false' };
    return obj.maps === undefined ? { type: 'subscribe', frames: obj.frames } : { type: 'subscribe', frames: obj.frames, maps: obj.maps };
  }
  return { problem: `unknown type ${JSON.stringify(obj.type ?? null).slice(0, 40)}` };
}

/**
 * MQTT topic names of a fleet, in one place: a station's topics under a root, and the topics
 * of the live locate (fixes, its retained status). Station topics have two levels under the
 * root (ROOT/STATION/events); the locate's have one (ROOT/fixes, ROOT/locate), so no station
 * id can collide with them.
 */
import { stationIdProblem } from './station-id.js';

export const DEFAULT_TOPIC_ROOT = 'bearline';

export interface StationTopicNames {
  events: string;
  frames: string;
  status: string;
}

export function stationTopicNames(root: string, station: string): StationTopicNames {
  return { events: `${root}/${station}/events`, frames: `${root}/${station}/frames`, status: `${root}/${station}/status` };
}

export function locateTopicNames(root: string): { fixes: string; status: string } {
  return { fixes: `${root}/fixes`, status: `${root}/locate` };
}

/** Why a topic root cannot be used, or null when it can (one or more levels, no wildcards). */
export function topicRootProblem(root: string): string | null {
  if (/[+#\u0000]/.test(root)) return "must not hold the MQTT wildcards '+' or '#'";
  if (root.startsWith('/') || root.endsWith('/') || root.includes('//')) return "must not start or end with '/' or hold an empty level (write it like bearline or marsh/bearline)";
  if (root.startsWith('$')) return "must not start with '$' (broker topics)";
  if (Buffer.byteLength(root) > 200) return 'is too long (at most 200 bytes)';
  return null;
}

/** Why a station id cannot name MQTT topics, or null. */
export function topicStationProblem(id: string): string | null {
  return stationIdProblem(id);
}

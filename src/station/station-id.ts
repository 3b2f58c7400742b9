import { hostname } from 'node:os';
import { UsageError } from '../util/errors.js';

/**
 * A station id names log files and MQTT topics, so it is limited to characters that are safe
 * in both: letters, digits, '-' and '_', starting with a letter or digit, at most 64 long.
 * (No '/', '+', '#' or spaces, which mean something in MQTT topics; no '.', which the log
 * file names use as a separator.)
 */
const STATION_ID = /^[A-Za-z0-9][A-Za-z0-9_-]{0,63}$/;

/** Why an id is not allowed, or null when it is. */
export function stationIdProblem(id: string): string | null {
  return STATION_ID.test(id) ? null : "is not allowed: use 1 to 64 letters, digits, '-' or '_', starting with a letter or digit (e.g. marsh-east)";
}

export function validateStationId(id: string): string {
  const problem = stationIdProblem(id);
  if (problem !== null) throw new UsageError(`station id '${id}' ${problem}`);
  return id;
}

/** The host name cut down to the safe characters, or 'station' when nothing is left. */
export function defaultStationId(host: string = hostname()): string {
  const cleaned = host.split('.')[0]!.replace(/[^A-Za-z0-9_-]/g, '-').replace(/^[-_]+/, '').slice(0, 64);
  return cleaned === '' ? 'station' : cleaned;
}

/**
 * Options of a headless station run that are not about one sink: the options object, one
 * spec per option (command line, the profile's "station" section, the README's table) and
 * validation.
 */
import { numberOption, resolveWithSpecs, textOption, type OptionSpec } from '../options/option-spec.js';
import { defaultStationId, stationIdProblem } from './station-id.js';
import { hostListProblem } from '../util/host-check.js';

export interface StationOptions {
  /** Names the log files and MQTT topics. */
  station: string;
  /** Minutes between status lines on stderr; 0 = none. */
  statusEvery: number;
  /** Port of the health endpoint; null = no endpoint. 0 picks a free port. */
  health: number | null;
  /** Address the health endpoint listens on. */
  healthHost: string;
  /** More names the health endpoint answers to (comma-separated), besides loopback and this machine's addresses; null for none. */
  healthAllowHosts: string | null;
  /** Seconds to wait for the sinks to close on SIGINT/SIGTERM before giving up. */
  closeTimeout: number;
  /** Seconds between reads of live audio on stdin (all that has arrived); 0 = as it arrives. */
  readEvery: number;
}

export const stationOptionSpecs: readonly OptionSpec<keyof StationOptions>[] = [
  textOption('station', 'station', 'id', null, "this station's id in file names and MQTT topics (letters, digits, '-', '_')", { defaultText: 'host name', check: stationIdProblem }),
  numberOption('statusEvery', 'status-every', 'min', 10, { min: 0, max: 1440, unit: 'minutes' }, 'print a status line on stderr this often (0 = never)'),
  numberOption('health', 'health', 'port', null, { min: 0, max: 65535, integer: true }, 'serve the status as JSON over HTTP on this port', { defaultText: 'off' }),
  textOption('healthHost', 'health-host', 'address', '127.0.0.1', 'address for --health (keep 127.0.0.1 unless the network is trusted)'),
  textOption('healthAllowHosts', 'health-allow-hosts', 'names', null, "more host names --health may be asked by (comma-separated), besides loopback and this machine's addresses; other Host and Origin headers are refused", {
    defaultText: 'none',
    check: hostListProblem,
  }),
  numberOption('readEvery', 'read-every', 's', 0.1, { min: 0, max: 1, unit: 's' }, 'with --stdin, analyse the audio that has arrived this often: fewer wake-ups, less CPU, up to this much more latency (0 = as it arrives; stdin itself is read as often as keeps it under three quarters full: a 64 KiB pipe, or half the send buffer of a Unix socket)'),
  numberOption('closeTimeout', 'close-timeout', 's', 10, { min: 0, max: 600, minExclusive: true, unit: 's' }, 'on SIGINT/SIGTERM, wait this long for files and the broker to close'),
];

export function resolveStationOptions(partial: Partial<StationOptions>): StationOptions {
  const o = resolveWithSpecs<StationOptions>(stationOptionSpecs, partial, 'station');
  return { ...o, station: o.station ?? defaultStationId() };
}

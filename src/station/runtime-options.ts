import { UsageError } from '../util/errors.js';
import { applyDefaults } from '../util/apply-defaults.js';
import type { OptionSpec } from '../options/option-spec.js';
import { defaultStationId, validateStationId } from './station-id.js';

/** Options of a headless station run that are not about one sink. */
export interface StationOptions {
  /** Names the log files and MQTT topics. */
  station: string;
  /** Minutes between status lines on stderr; 0 = none. */
  statusEvery: number;
  /** Port of the health endpoint; null = no endpoint. 0 picks a free port. */
  health: number | null;
  /** Address the health endpoint listens on. */
  healthHost: string;
  /** Seconds to wait for the sinks to close on SIGINT/SIGTERM before giving up. */
  closeTimeout: number;
}

export const STATION_DEFAULTS: StationOptions = {
  station: defaultStationId(),
  statusEvery: 10,
  health: null,
  healthHost: '127.0.0.1',
  closeTimeout: 10,
};

function parseMinutes(raw: string): number {
  const n = Number(raw);
  if (raw.trim() === '' || !Number.isFinite(n) || n < 0 || n > 1440) throw new UsageError(`--status-every '${raw}' must be minutes from 0 (off) to 1440`);
  return n;
}

export function parsePort(raw: string): number {
  const n = Number(raw);
  if (!/^\d+$/.test(raw.trim()) || n > 65535) throw new UsageError(`--health '${raw}' is not a TCP port; use a whole number from 1 to 65535`);
  return n;
}

function parseCloseTimeout(raw: string): number {
  const n = Number(raw);
  if (raw.trim() === '' || !Number.isFinite(n) || n <= 0 || n > 600) throw new UsageError(`--close-timeout '${raw}' must be seconds above 0 and at most 600`);
  return n;
}

export const stationOptionSpecs: readonly OptionSpec<keyof StationOptions>[] = [
  { key: 'station', flag: '--station <id>', help: "this station's id in file names and MQTT topics (letters, digits, '-', '_')", defaultValue: 'the host name', parse: validateStationId },
  { key: 'statusEvery', flag: '--status-every <minutes>', help: 'print a status line on stderr this often (0 = never)', defaultValue: STATION_DEFAULTS.statusEvery, parse: parseMinutes },
  { key: 'health', flag: '--health <port>', help: 'serve the status as JSON over HTTP on this port', defaultValue: 'off', parse: parsePort },
  { key: 'healthHost', flag: '--health-host <address>', help: 'address for --health (keep 127.0.0.1 unless the network is trusted)', defaultValue: STATION_DEFAULTS.healthHost, parse: (raw: string) => raw },
  { key: 'closeTimeout', flag: '--close-timeout <seconds>', help: 'on SIGINT/SIGTERM, wait this long for files and the broker to close', defaultValue: STATION_DEFAULTS.closeTimeout, parse: parseCloseTimeout },
];

export function resolveStationOptions(partial: Partial<StationOptions>): StationOptions {
  const o = applyDefaults(STATION_DEFAULTS, partial);
  validateStationId(o.station);
  if (!(o.statusEvery >= 0 && o.statusEvery <= 1440)) throw new UsageError(`--status-every ${o.statusEvery} must be minutes from 0 to 1440`);
  if (o.health !== null && !(Number.isInteger(o.health) && o.health >= 0 && o.health <= 65535)) throw new UsageError(`--health ${o.health} is not a TCP port`);
  if (o.healthHost.trim() === '') throw new UsageError('--health-host is empty; give an address such as 127.0.0.1');
  if (!(o.closeTimeout > 0 && o.closeTimeout <= 600)) throw new UsageError(`--close-timeout ${o.closeTimeout} must be seconds above 0 and at most 600`);
  return o;
}

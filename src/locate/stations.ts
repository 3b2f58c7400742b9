/**
 * Station descriptions for position fixing (our own JSON format, see the README):
 *
 * {
 *   "origin": { "lat_deg": 52.37, "lon_deg": 4.89, "alt_m": 0 },      optional
 *   "stations": [
 *     { "id": "reed-north", "lat_deg": 52.3712, "lon_deg": 4.8901, "alt_m": 1.2,
 *       "heading_deg": 90, "clock_offset_s": 0.12, "bearing_sd_deg": 4, "clock_synced": false },
 *     { "id": "dyke-east", "east_m": 420, "north_m": -35, "heading_deg": 270, "clock_synced": true }
 *   ]
 * }
 *
 * A station's position is either WGS 84 (lat_deg, lon_deg, optional alt_m) or local metres
 * (east_m, north_m, optional up_m) on the tangent plane at "origin". Pure: a parsed JSON
 * value in, validated stations placed on one tangent plane out; errors are UsageErrors that
 * name the field.
 */
import { wrap360 } from '../geometry/vec3.js';
import type { Vec3 } from '../geometry/vec3.js';
import { UsageError } from '../util/errors.js';
import { type Geodetic, type LocalFrame, geodeticToEnu, localFrame, enuToGeodetic } from './geodesy.js';
import { parseUtcSeconds } from './time.js';

export interface StationSpec {
  id: string;
  /** Exactly one of geodetic / localM is set. */
  geodetic: Geodetic | null;
  localM: Vec3 | null;
  /** Compass heading of the array's front (+y), degrees from true north; null if not given. */
  headingDeg: number | null;
  /** Station clock minus true time, seconds: true time = station time - clock_offset_s. */
  clockOffsetS: number;
  /** Residual clock uncertainty after the offset (seconds); null = the options' default. */
  clockUncertaintyS: number | null;
  /** One-sigma bearing uncertainty, degrees; null = the options' default. */
  bearingSdDeg: number | null;
  /** Clocks disciplined to a common time (GPS): arrival-time differences are usable. */
  clockSynced: boolean;
  /** UTC of the station's stream start (seconds since 1970), when given. */
  streamStartUtcS: number | null;
}

export interface StationFile {
  origin: Geodetic | null;
  stations: StationSpec[];
}

/** A station on the common tangent plane. */
export interface PlacedStation extends StationSpec {
  /** East, north, up in metres on the common plane. */
  enu: Vec3;
  /** WGS 84 position, when the plane has a geodetic origin. */
  position: Geodetic | null;
}

export interface PlacedStations {
  /** The common tangent plane; null when all stations are in local metres without an origin. */
  frame: LocalFrame | null;
  stations: PlacedStation[];
}

type Json = null | boolean | number | string | Json[] | { [key: string]: Json };
type JsonObject = { [key: string]: Json };

function isObject(v: Json | undefined): v is JsonObject {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function fail(source: string, path: string, what: string): never {
  throw new UsageError(`${source}: ${path} ${what}`);
}

function rejectUnknown(source: string, path: string, obj: JsonObject, allowed: readonly string[]): void {
  for (const key of Object.keys(obj)) {
    if (!allowed.includes(key)) {
      fail(source, `${path}${path ? '.' : ''}${key}`, `is not a known field (known: ${allowed.join(', ')}); remove it or fix its spelling`);
    }
  }
}

function num(source: string, path: string, v: Json | undefined, lo: number, hi: number, unit: string): number {
  if (typeof v !== 'number' || !Number.isFinite(v)) fail(source, path, `must be a number (${unit})`);
  if (v < lo || v > hi) fail(source, path, `is ${v}: give a value from ${lo} to ${hi} ${unit}`);
  return v;
}

function optNum(source: string, path: string, v: Json | undefined, lo: number, hi: number, unit: string): number | null {
  return v === undefined || v === null ? null : num(source, path, v, lo, hi, unit);
}

function geodeticFrom(source: string, path: string, obj: JsonObject): Geodetic {
  return {
    lat_deg: num(source, `${path}.lat_deg`, obj.lat_deg, -90, 90, 'degrees'),
    lon_deg: num(source, `${path}.lon_deg`, obj.lon_deg, -180, 180, 'degrees'),
    alt_m: optNum(source, `${path}.alt_m`, obj.alt_m, -1000, 10000, 'metres') ?? 0,
  };
}

const STATION_FIELDS = [
  'id',
  'lat_deg',
  'lon_deg',
  'alt_m',
  'east_m',
  'north_m',
  'up_m',
  'heading_deg',
  'clock_offset_s',
  'clock_uncertainty_s',
  'bearing_sd_deg',
  'clock_synced',
  'stream_start_utc',
  'note',
] as const;

function parseStation(source: string, path: string, v: Json): StationSpec {
  if (!isObject(v)) fail(source, path, 'must be an object with at least "id" and a position');
  rejectUnknown(source, path, v, STATION_FIELDS);
  if (typeof v.id !== 'string' || v.id.trim() === '') fail(source, `${path}.id`, 'must be a non-empty string');
  const id = v.id;
  if (/[=\s]/.test(id)) fail(source, `${path}.id`, `'${id}' may not contain '=' or spaces (they separate STATION=FILE arguments)`);
  const where = `${path} ('${id}')`;
  const hasGeo = v.lat_deg !== undefined || v.lon_deg !== undefined;
  const hasLocal = v.east_m !== undefined || v.north_m !== undefined;
  if (hasGeo && hasLocal) fail(source, where, 'gives both lat_deg/lon_deg and east_m/north_m: keep one kind of position');
  if (!hasGeo && !hasLocal) fail(source, where, 'has no position: give lat_deg and lon_deg, or east_m and north_m');
  let geodetic: Geodetic | null = null;
  let localM: Vec3 | null = null;
  if (hasGeo) {
    if (v.up_m !== undefined) fail(source, `${where}.up_m`, 'goes with east_m/north_m; with lat_deg/lon_deg use alt_m');
    geodetic = geodeticFrom(source, where, v);
  } else {
    if (v.alt_m !== undefined) fail(source, `${where}.alt_m`, 'goes with lat_deg/lon_deg; with east_m/north_m use up_m');
    localM = [
      num(source, `${where}.east_m`, v.east_m, -1e6, 1e6, 'metres'),
      num(source, `${where}.north_m`, v.north_m, -1e6, 1e6, 'metres'),
      optNum(source, `${where}.up_m`, v.up_m, -1e4, 1e4, 'metres') ?? 0,
    ];
  }
  const heading = optNum(source, `${where}.heading_deg`, v.heading_deg, -360, 360, 'degrees from true north');
  if (v.clock_synced !== undefined && typeof v.clock_synced !== 'boolean') {
    fail(source, `${where}.clock_synced`, 'must be true or false');
  }
  let streamStart: number | null = null;
  if (v.stream_start_utc !== undefined) {
    const parsed = typeof v.stream_start_utc === 'string' ? parseUtcSeconds(v.stream_start_utc) : null;
    if (parsed === null) fail(source, `${where}.stream_start_utc`, 'must be an ISO 8601 UTC time such as "2025-05-01T21:00:00.000Z"');
    streamStart = parsed;
  }
  if (v.note !== undefined && typeof v.note !== 'string') fail(source, `${where}.note`, 'must be a string');
  return {
    id,
    geodetic,
    localM,
    headingDeg: heading === null ? null : wrap360(heading),
    clockOffsetS: optNum(source, `${where}.clock_offset_s`, v.clock_offset_s, -86400, 86400, 'seconds') ?? 0,
    clockUncertaintyS: optNum(source, `${where}.clock_uncertainty_s`, v.clock_uncertainty_s, 0, 3600, 'seconds'),
    bearingSdDeg: optNum(source, `${where}.bearing_sd_deg`, v.bearing_sd_deg, 0.01, 90, 'degrees'),
    clockSynced: v.clock_synced === true,
    streamStartUtcS: streamStart,
  };
}

/** Validate a parsed station file. `source` names the file in messages. */
export function parseStationFile(value: unknown, source: string): StationFile {
  const v = value as Json;
  if (!isObject(v)) fail(source, 'the file', 'must hold a JSON object with a "stations" list');
  rejectUnknown(source, '', v, ['origin', 'stations', 'name', 'note']);
  let origin: Geodetic | null = null;
  if (v.origin !== undefined) {
    if (!isObject(v.origin)) fail(source, 'origin', 'must be an object with lat_deg, lon_deg and optional alt_m');
    rejectUnknown(source, 'origin', v.origin, ['lat_deg', 'lon_deg', 'alt_m']);
    origin = geodeticFrom(source, 'origin', v.origin);
  }
  if (!Array.isArray(v.stations)) fail(source, 'stations', 'must be a list of station objects');
  if (v.stations.length < 2) fail(source, 'stations', `has ${v.stations.length} entries: a position fix needs at least 2 stations`);
  const stations = v.stations.map((s, i) => parseStation(source, `stations[${i}]`, s));
  const seen = new Set<string>();
  stations.forEach((s, i) => {
    if (seen.has(s.id)) fail(source, `stations[${i}].id`, `'${s.id}' is used twice: give each station its own id`);
    seen.add(s.id);
  });
  return { origin, stations };
}

/**
 * Put all stations on one tangent plane: the file's origin, else the mean of the stations'
 * WGS 84 positions. Stations in local metres are east/north/up on that plane (their
 * bearings are taken against the plane's north); they need an origin when other stations
 * are given in latitude and longitude.
 */
export function placeStations(file: StationFile, source: string): PlacedStations {
  const geo = file.stations.filter((s) => s.geodetic !== null);
  const local = file.stations.filter((s) => s.localM !== null);
  let origin = file.origin;
  if (origin === null && geo.length > 0 && local.length > 0) {
    throw new UsageError(
      `${source}: station '${local[0]!.id}' is in local metres but '${geo[0]!.id}' is in latitude/longitude: add "origin" (lat_deg, lon_deg) so both can be placed`,
    );
  }
  if (origin === null && geo.length > 0) {
    const n = geo.length;
    origin = {
      lat_deg: geo.reduce((a, s) => a + s.geodetic!.lat_deg, 0) / n,
      lon_deg: geo.reduce((a, s) => a + s.geodetic!.lon_deg, 0) / n,
      alt_m: geo.reduce((a, s) => a + s.geodetic!.alt_m, 0) / n,
    };
  }
  const frame = origin === null ? null : localFrame(origin);
  const stations = file.stations.map((s): PlacedStation => {
    if (s.geodetic !== null) return { ...s, enu: geodeticToEnu(frame!, s.geodetic), position: s.geodetic };
    const enu = s.localM!;
    return { ...s, enu, position: frame === null ? null : enuToGeodetic(frame, enu) };
  });
  return { frame, stations };
}

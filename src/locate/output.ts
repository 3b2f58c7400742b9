/**
 * Located calls -> text: GeoJSON (RFC 7946: a FeatureCollection of Point features,
 * coordinates [longitude, latitude, height]), CSV, and a plot-ready scene in local metres for
 * the browser viewer. Pure: results in, strings and plain objects out.
 */
import { UsageError } from '../util/errors.js';
import type { LocateResult, LocatedCall } from './locate.js';
import type { PlacedStations } from './stations.js';

export type LocateFormat = 'geojson' | 'csv' | 'scene';
export const LOCATE_FORMATS: readonly LocateFormat[] = ['geojson', 'csv', 'scene'];

/** Properties of one fix, shared by GeoJSON and CSV. */
export interface FixProperties {
  time_s: number | null;
  utc: string | null;
  east_m: number | null;
  north_m: number | null;
  ellipse_major_m: number | null;
  ellipse_minor_m: number | null;
  ellipse_orientation_deg: number | null;
  ellipse_level: number | null;
  stations: string[];
  dropped: string[];
  residual_m: number | null;
  crossing_deg: number;
  emission_sd_s: number | null;
  flags: string[];
  events: string[];
}

function round(x: number | null | undefined, digits: number): number | null {
  if (x === null || x === undefined || !Number.isFinite(x)) return null;
  const f = 10 ** digits;
  return Math.round(x * f) / f;
}

export function fixProperties(call: LocatedCall): FixProperties {
  const { fix, ellipse } = call;
  return {
    time_s: round(call.timeS, 4),
    utc: call.utc,
    east_m: fix.ok ? round(fix.east, 2) : null,
    north_m: fix.ok ? round(fix.north, 2) : null,
    ellipse_major_m: round(ellipse?.majorM, 2),
    ellipse_minor_m: round(ellipse?.minorM, 2),
    ellipse_orientation_deg: round(ellipse?.orientationDeg, 1),
    ellipse_level: ellipse?.level ?? null,
    stations: fix.used,
    dropped: fix.dropped,
    residual_m: fix.ok ? round(fix.residualM, 2) : null,
    crossing_deg: round(fix.crossingDeg, 1) ?? 0,
    emission_sd_s: round(fix.emissionSdS, 5),
    flags: fix.flags,
    events: call.events.map((e) => e.origin),
  };
}

function selected(result: LocateResult, includeUnfixed: boolean): LocatedCall[] {
  return result.calls.filter((c) => c.fix.ok || includeUnfixed);
}

export interface GeoJsonPoint {
  type: 'Point';
  coordinates: [number, number, number];
}
export interface GeoJsonFeature {
  type: 'Feature';
  geometry: GeoJsonPoint | null;
  properties: FixProperties;
}
export interface GeoJsonCollection {
  type: 'FeatureCollection';
  features: GeoJsonFeature[];
}

/** One located call as a GeoJSON Feature (geometry null without a fix or without a WGS 84 origin). */
export function featureOf(call: LocatedCall): GeoJsonFeature {
  return {
    type: 'Feature',
    geometry:
      call.position === null
        ? null
        : {
            type: 'Point',
            // RFC 7946 section 3.1.1: longitude, latitude, then height; about 1 cm precision.
            coordinates: [round(call.position.lon_deg, 7)!, round(call.position.lat_deg, 7)!, round(call.position.alt_m, 2)!],
          },
    properties: fixProperties(call),
  };
}

/** GeoJSON needs WGS 84: stations in local metres need an origin in the station file. */
export function toGeoJson(result: LocateResult, includeUnfixed: boolean): GeoJsonCollection {
  if (result.stations.frame === null) {
    throw new UsageError(
      'the stations are in local metres without an "origin": add "origin" (lat_deg, lon_deg) to the station file for GeoJSON, or use --format csv or scene',
    );
  }
  return {
    type: 'FeatureCollection',
    features: selected(result, includeUnfixed).map(featureOf),
  };
}

const CSV_COLUMNS = [
  'time_s',
  'utc',
  'lat_deg',
  'lon_deg',
  'east_m',
  'north_m',
  'ellipse_major_m',
  'ellipse_minor_m',
  'ellipse_orientation_deg',
  'ellipse_level',
  'stations',
  'dropped',
  'residual_m',
  'crossing_deg',
  'flags',
] as const;

function csvCell(v: string | number | null): string {
  if (v === null) return '';
  const s = String(v);
  return /[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** CSV, one row per call; lists are joined with ';'. Latitude and longitude are empty without an origin. */
export function toCsv(result: LocateResult, includeUnfixed: boolean): string {
  const rows = [CSV_COLUMNS.join(',')];
  for (const call of selected(result, includeUnfixed)) {
    const p = fixProperties(call);
    const cells: Record<(typeof CSV_COLUMNS)[number], string | number | null> = {
      time_s: p.time_s,
      utc: p.utc,
      lat_deg: round(call.position?.lat_deg, 7),
      lon_deg: round(call.position?.lon_deg, 7),
      east_m: p.east_m,
      north_m: p.north_m,
      ellipse_major_m: p.ellipse_major_m,
      ellipse_minor_m: p.ellipse_minor_m,
      ellipse_orientation_deg: p.ellipse_orientation_deg,
      ellipse_level: p.ellipse_level,
      stations: p.stations.join(';'),
      dropped: p.dropped.join(';'),
      residual_m: p.residual_m,
      crossing_deg: p.crossing_deg,
      flags: p.flags.join(';'),
    };
    rows.push(CSV_COLUMNS.map((c) => csvCell(cells[c])).join(','));
  }
  return rows.join('\n') + '\n';
}

/** Plot-ready scene for a map-less viewer: everything in metres east/north of the plane's origin. */
export interface PlotScene {
  origin: { lat_deg: number; lon_deg: number; alt_m: number } | null;
  stations: { id: string; east_m: number; north_m: number; heading_deg: number | null }[];
  fixes: {
    time_s: number | null;
    east_m: number;
    north_m: number;
    ellipse: { major_m: number; minor_m: number; orientation_deg: number; level: number };
    stations: string[];
    dropped: string[];
    flags: string[];
    /** Each used station's bearing ray, from the station to the fix's foot on the ray. */
    rays: { station: string; from: [number, number]; to: [number, number] }[];
  }[];
}

/** One fix of a plot scene (the call must have a fix and an ellipse). */
export type PlotFix = PlotScene['fixes'][number];

/** A fixed call in local metres with its rays, for a map-less viewer; null without a fix. */
export function plotFixOf(c: LocatedCall, placed: PlacedStations): PlotFix | null {
  if (!c.fix.ok || c.ellipse === null) return null;
  const at = new Map(placed.stations.map((s) => [s.id, s.enu]));
  return {
    time_s: round(c.timeS, 4),
    east_m: round(c.fix.east, 2)!,
    north_m: round(c.fix.north, 2)!,
    ellipse: {
      major_m: round(c.ellipse.majorM, 2)!,
      minor_m: round(c.ellipse.minorM, 2)!,
      orientation_deg: round(c.ellipse.orientationDeg, 1)!,
      level: c.ellipse.level,
    },
    stations: c.fix.used,
    dropped: c.fix.dropped,
    flags: c.fix.flags,
    rays: c.fix.residuals.map((r) => {
      const s = at.get(r.station)!;
      const to: [number, number] = [round(s[0] + r.dir[0] * r.alongM, 2)!, round(s[1] + r.dir[1] * r.alongM, 2)!];
      return { station: r.station, from: [round(s[0], 2)!, round(s[1], 2)!] as [number, number], to };
    }),
  };
}

/** The stations of a plot scene, in local metres. */
export function plotStationsOf(placed: PlacedStations): PlotScene['stations'] {
  return placed.stations.map((s) => ({ id: s.id, east_m: round(s.enu[0], 2)!, north_m: round(s.enu[1], 2)!, heading_deg: s.headingDeg }));
}

export function toPlotScene(result: LocateResult): PlotScene {
  const { frame } = result.stations;
  return {
    origin: frame === null ? null : { ...frame.origin },
    stations: plotStationsOf(result.stations),
    fixes: result.calls.map((c) => plotFixOf(c, result.stations)).filter((f): f is PlotFix => f !== null),
  };
}

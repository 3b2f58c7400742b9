/**
 * Positions from several stations, end to end and pure: per-station event lists in, one
 * located (or refused) call per matched group out. This is the entry point for anything
 * that has events per station, the command line and end-to-end tests alike:
 *
 *   locateEventLists(placeStations(parseStationFile(json, name), name), { north: [...], dyke: [...] })
 */
import { UsageError } from '../util/errors.js';
import type { EventRecord } from '../records/record-types.js';
import { type ErrorEllipse, errorEllipse } from './ellipse.js';
import { type StationEvent, toStationEvents } from './events.js';
import { type Geodetic, bearingDirectionInFrame, enuAtHeight, enuToGeodetic, haversineDistance } from './geodesy.js';
import { type Arrival, type BearingLine, type FixSolution, fixPosition } from './intersect.js';
import { type MatchSettings, matchEvents } from './matching.js';
import { type LocateOptions, resolveLocateOptions } from './options.js';
import type { PlacedStation, PlacedStations } from './stations.js';
import { formatUtc } from './time.js';

const DEG = Math.PI / 180;

export interface LocatedCall {
  /** Solver output (ok = false: no trustworthy point, see fix.flags). */
  fix: FixSolution;
  /** Emission time, seconds from the time zero of the result; null without a fix. */
  timeS: number | null;
  utc: string | null;
  /** WGS 84 position of the fix (at the mean height of the used stations), when the plane has an origin. */
  position: Geodetic | null;
  ellipse: ErrorEllipse | null;
  /** The matched events, one per station. */
  events: StationEvent[];
}

export interface LocateResult {
  stations: PlacedStations;
  calls: LocatedCall[];
  /** Events that matched no other station's event. */
  unmatched: StationEvent[];
  /** Times are UTC-based (else seconds from the common stream start). */
  absolute: boolean;
  /** Seconds since 1970 of time_s = 0 when absolute (the earliest stream start), else 0. */
  timeZeroS: number;
}

function stationById(placed: PlacedStations): Map<string, PlacedStation> {
  return new Map(placed.stations.map((s) => [s.id, s]));
}

/** Distance between two stations: haversine when both are in WGS 84, else on the plane. */
export function stationDistanceM(a: PlacedStation, b: PlacedStation): number {
  if (a.geodetic !== null && b.geodetic !== null) return haversineDistance(a.geodetic, b.geodetic);
  return Math.hypot(a.enu[0] - b.enu[0], a.enu[1] - b.enu[1], a.enu[2] - b.enu[2]);
}

function clockUncertainty(st: PlacedStation, o: LocateOptions): number {
  return st.clockUncertaintyS ?? (st.clockSynced ? o.syncedClockUncertaintyS : o.clockUncertaintyS);
}

function bearingLine(placed: PlacedStations, st: PlacedStation, ev: StationEvent, o: LocateOptions): BearingLine {
  const dir: readonly [number, number] =
    placed.frame !== null && st.geodetic !== null
      ? bearingDirectionInFrame(placed.frame, st.geodetic, ev.bearingDeg)
      : [Math.sin(ev.bearingDeg * DEG), Math.cos(ev.bearingDeg * DEG)];
  return { station: st.id, at: st.enu, dir, sdRad: (st.bearingSdDeg ?? o.bearingSdDeg) * DEG };
}

/** Locate one matched group of events (one event per station). */
export function locateGroup(placed: PlacedStations, group: readonly StationEvent[], options: LocateOptions, timeZeroS = 0): LocatedCall {
  const byId = stationById(placed);
  const order = new Map(placed.stations.map((st, i) => [st.id, i]));
  // Station-file order, so that output lists are stable.
  const sorted = [...group].sort((a, b) => (order.get(a.station) ?? 0) - (order.get(b.station) ?? 0));
  const lines: BearingLine[] = [];
  const arrivals: Arrival[] = [];
  for (const ev of sorted) {
    const st = byId.get(ev.station);
    if (st === undefined) throw new UsageError(`${ev.origin}: station '${ev.station}' is not in the station file`);
    lines.push(bearingLine(placed, st, ev, options));
    if (st.clockSynced) {
      arrivals.push({ station: st.id, at: st.enu, timeS: ev.timeS, sdS: Math.hypot(options.onsetSdS, clockUncertainty(st, options)) });
    }
  }
  const useArrivals = options.useTimeDifferences && arrivals.length >= 2 ? arrivals : [];
  const fix = fixPosition(lines, useArrivals, {
    speedOfSound: options.speedOfSound,
    positionSdM: options.positionSdM,
    minCrossingDeg: options.minCrossingDeg,
    outlierSigma: options.outlierSigma,
  });
  const absolute = group.every((e) => e.absolute);
  if (!fix.ok) return { fix, timeS: null, utc: null, position: null, ellipse: null, events: sorted };
  let emission = fix.emissionS;
  if (emission === null) {
    const used = sorted.filter((e) => fix.used.includes(e.station));
    emission =
      used.reduce((acc, e) => {
        const at = byId.get(e.station)!.enu;
        return acc + e.timeS - Math.hypot(fix.east - at[0], fix.north - at[1], fix.up - at[2]) / options.speedOfSound;
      }, 0) / used.length;
  }
  let position: Geodetic | null = null;
  if (placed.frame !== null) {
    const usedStations = fix.used.map((id) => byId.get(id)!);
    const alt = usedStations.reduce((a, s) => a + (s.position?.alt_m ?? 0), 0) / usedStations.length;
    position = enuToGeodetic(placed.frame, enuAtHeight(placed.frame, fix.east, fix.north, alt));
  }
  return {
    fix,
    timeS: emission - timeZeroS,
    utc: absolute ? formatUtc(emission) : null,
    position,
    ellipse: errorEllipse(fix.cov, options.ellipseLevel),
    events: sorted,
  };
}

/** The matching settings of a set of stations: the one place both the file and the live mode get them from. */
export function matchSettingsFor(placed: PlacedStations, options: LocateOptions): MatchSettings {
  const byId = stationById(placed);
  // Looked up many times per seed: made once here.
  const at = new Map(placed.stations.map((st) => [st.id, [st.enu[0], st.enu[1]] as const]));
  const clock = new Map(placed.stations.map((st) => [st.id, clockUncertainty(st, options)]));
  const sd = new Map(placed.stations.map((st) => [st.id, (st.bearingSdDeg ?? options.bearingSdDeg) * DEG]));
  return {
    speedOfSound: options.speedOfSound,
    slackS: options.matchSlackS,
    distanceM: (a, b) => stationDistanceM(byId.get(a)!, byId.get(b)!),
    clockUncertaintyS: (id) => clock.get(id)!,
    at: (id) => at.get(id)!,
    direction: (ev) => bearingLine(placed, byId.get(ev.station)!, ev, options).dir,
    bearingSdRad: (id) => sd.get(id)!,
    onsetSdS: options.onsetSdS,
    minCrossingDeg: options.minCrossingDeg,
    gateSigma: options.outlierSigma,
  };
}

/**
 * Match events across stations and fix each call. `lists` maps a station id to its events
 * (EventRecords as the scanner writes them); `origins` optionally names where each record
 * came from (same shape), for messages.
 */
export function locateEventLists(
  placed: PlacedStations,
  lists: Readonly<Record<string, readonly EventRecord[]>>,
  partialOptions: Partial<LocateOptions> = {},
  origins: Readonly<Record<string, readonly string[]>> = {},
): LocateResult {
  const options = resolveLocateOptions(partialOptions);
  const byId = stationById(placed);
  const events: StationEvent[] = [];
  for (const [id, records] of Object.entries(lists)) {
    const st = byId.get(id);
    if (st === undefined) throw new UsageError(`events were given for station '${id}', which is not in the station file`);
    events.push(...toStationEvents(st, records, origins[id]));
  }
  const abs = events.filter((e) => e.absolute);
  const rel = events.filter((e) => !e.absolute);
  if (abs.length > 0 && rel.length > 0) {
    throw new UsageError(
      `station '${abs[0]!.station}' has UTC times but '${rel[0]!.station}' (${rel[0]!.origin}) has only stream times: give stream_start_utc for '${rel[0]!.station}' in the station file`,
    );
  }
  const absolute = abs.length > 0;
  const timeZeroS = absolute ? abs.reduce((m, e) => Math.min(m, e.streamStartS), Infinity) : 0;
  const { groups, unmatched } = matchEvents(events, matchSettingsFor(placed, options), placed.stations.map((st) => st.id));
  const calls = groups.map((g) => locateGroup(placed, g, options, timeZeroS));
  return { stations: placed, calls, unmatched, absolute, timeZeroS };
}

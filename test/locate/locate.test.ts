import { describe, expect, it } from 'vitest';
import { Geodesic } from 'geographiclib-geodesic';
import { UsageError } from '../../src/util/errors.js';
import type { EventRecord } from '../../src/records/record-types.js';
import { geodeticToEnu } from '../../src/locate/geodesy.js';
import { locateEventLists } from '../../src/locate/locate.js';
import { toCsv, toGeoJson, toPlotScene } from '../../src/locate/output.js';
import { parseStationFile, placeStations } from '../../src/locate/stations.js';
import { bearingTo } from './helpers.js';

const C = 343;

function ev(start: number, bearing: number | null, extra: Partial<EventRecord> = {}): EventRecord {
  return { start_s: start, end_s: start + 0.3, azimuth_deg: bearing ?? 0, bearing_deg: bearing, spread_deg: 1, confidence: 0.9, track: 1, ...extra };
}

function placed(json: unknown) {
  return placeStations(parseStationFile(json, 'test.json'), 'test.json');
}

// GeographicLib (geographiclib-geodesic 2.2.0; Karney, J. Geodesy 87, 2013) solves the
// direct geodesic problem on WGS 84 exactly: stations are put at known geodesic distances
// and azimuths from a calling frog, and their compass bearings back to it are the reverse
// geodesic azimuths. The fix must land on the frog.
describe('fixes on the WGS 84 ellipsoid against GeographicLib geodesics', () => {
  const frog = { lat: 60.5, lon: 25.0 };
  const layout = [
    { id: 'bog-west', azi: 265, dist: 4800 },
    { id: 'bog-north', azi: 5, dist: 3900 },
    { id: 'bog-east', azi: 95, dist: 5200 },
  ];
  const stations = layout.map((l) => {
    const d = Geodesic.WGS84.Direct(frog.lat, frog.lon, l.azi, l.dist);
    // azi2 is the forward azimuth at the station; the bearing back to the frog is azi2 + 180.
    return { id: l.id, lat: d.lat2!, lon: d.lon2!, bearing: (d.azi2! + 180) % 360 };
  });
  const lists = Object.fromEntries(stations.map((s, i) => [s.id, [ev(100 + i * 0.01, s.bearing)]]));

  it('lands within 1 cm of the frog, 4 to 5 km from each station', () => {
    const p = placed({ stations: stations.map((s) => ({ id: s.id, lat_deg: s.lat, lon_deg: s.lon })) });
    const result = locateEventLists(p, lists, { bearingSdDeg: 1 });
    expect(result.calls).toHaveLength(1);
    const pos = result.calls[0]!.position!;
    const miss = Geodesic.WGS84.Inverse(frog.lat, frog.lon, pos.lat_deg, pos.lon_deg).s12!;
    expect(miss).toBeLessThan(0.01);
    expect(Math.abs(pos.alt_m)).toBeLessThan(1e-3);
  });

  it('taking every bearing against the origin\'s north (a flat-earth shortcut) misses by metres', () => {
    // The same stations given as east/north metres on the plane: their bearings are then read
    // against the plane's north, ignoring the convergence of meridians (0.08 degrees at 5 km here).
    const origin = { lat_deg: 60.5, lon_deg: 25.0, alt_m: 0 };
    const exact = placed({ origin, stations: stations.map((s) => ({ id: s.id, lat_deg: s.lat, lon_deg: s.lon })) });
    const flat = placed({
      origin,
      stations: exact.stations.map((s) => ({ id: s.id, east_m: s.enu[0], north_m: s.enu[1], up_m: s.enu[2] })),
    });
    const pos = locateEventLists(flat, lists, { bearingSdDeg: 1 }).calls[0]!.position!;
    const miss = Geodesic.WGS84.Inverse(frog.lat, frog.lon, pos.lat_deg, pos.lon_deg).s12!;
    expect(miss).toBeGreaterThan(2);
  });
});

describe('event matching across stations', () => {
  // Three stations in local metres around a pond; two frogs and a passing bird.
  const stationsJson = (offsetB: number, extra: Record<string, unknown> = {}) => ({
    stations: [
      { id: 'pond-a', east_m: 0, north_m: 0, clock_uncertainty_s: 0.05 },
      { id: 'pond-b', east_m: 600, north_m: 0, clock_offset_s: offsetB, clock_uncertainty_s: 0.05, ...extra },
      { id: 'pond-c', east_m: 300, north_m: 500, clock_uncertainty_s: 0.05 },
    ],
  });
  const at: Record<string, [number, number]> = { 'pond-a': [0, 0], 'pond-b': [600, 0], 'pond-c': [300, 500] };
  const calls = [
    { t: 10.0, pos: [200, 150] as [number, number], band: [800, 1200] as [number, number] },
    { t: 10.5, pos: [420, 300] as [number, number], band: [3000, 5000] as [number, number] },
    { t: 31.2, pos: [300, 180] as [number, number], band: [800, 1200] as [number, number] },
  ];
  // Station B's clock runs 42.3 s ahead of true time: it logs true time + 42.3.
  const clockB = 42.3;
  const lists = Object.fromEntries(
    Object.entries(at).map(([id, s]) => [
      id,
      calls.map((c) =>
        ev(c.t + Math.hypot(c.pos[0] - s[0], c.pos[1] - s[1]) / C + (id === 'pond-b' ? clockB : 0), bearingTo(s, c.pos), { band_hz: c.band }),
      ),
    ]),
  );

  // Straight-line propagation (common practice, no source): a call reaches two stations at
  // most distance / c apart, so the window distance / c + clock uncertainties + slack holds it.
  it('groups each call across all three stations once the clock offset is applied, and fixes it', () => {
    const result = locateEventLists(placed(stationsJson(clockB)), lists);
    expect(result.calls).toHaveLength(3);
    expect(result.unmatched).toHaveLength(0);
    result.calls.forEach((call, i) => {
      expect(call.events.map((e) => e.station).sort()).toEqual(['pond-a', 'pond-b', 'pond-c']);
      expect(Math.hypot(call.fix.east - calls[i]!.pos[0], call.fix.north - calls[i]!.pos[1])).toBeLessThan(0.01);
      expect(call.timeS!).toBeCloseTo(calls[i]!.t, 6);
    });
  });

  it('without the offset the stations 42 s apart do not match', () => {
    const result = locateEventLists(placed(stationsJson(0)), lists);
    for (const call of result.calls) expect(call.events.map((e) => e.station)).not.toContain('pond-b');
    expect(result.unmatched.filter((e) => e.station === 'pond-b')).toHaveLength(3);
  });

  it('an offset known only to within the clock uncertainty still matches; beyond the window it does not', () => {
    // 0.04 s error in the stated offset: within the 0.05 s clock uncertainty of pond-b.
    expect(locateEventLists(placed(stationsJson(clockB + 0.04)), lists).unmatched).toHaveLength(0);
    // A 3 s error exceeds 600 m / 343 m/s + 0.1 s + 0.05 s slack = 1.9 s: pond-b drops out.
    const far = locateEventLists(placed(stationsJson(clockB + 3)), lists);
    expect(far.unmatched.filter((e) => e.station === 'pond-b')).toHaveLength(3);
  });

  it('calls half a second apart in separate bands are kept apart by band_hz', () => {
    const result = locateEventLists(placed(stationsJson(clockB)), lists);
    for (const call of result.calls) {
      const lows = new Set(call.events.map((e) => e.band![0]));
      expect(lows.size).toBe(1);
    }
  });
});

describe('matching overlapping calls by geometry', () => {
  // Two frogs call 40 ms apart from opposite ends of a pond; each reaches some stations
  // first, so closeness in time alone pairs them wrongly. Arrival = emission + range / c
  // (straight-line propagation, common practice, no source).
  const st = [
    { id: 'n', east_m: 0, north_m: 300 },
    { id: 's', east_m: 0, north_m: -300 },
    { id: 'e', east_m: 400, north_m: 0 },
    { id: 'w', east_m: -400, north_m: 0 },
  ];
  const frogs = [
    { t: 20.0, pos: [-330, 250] as [number, number] },
    { t: 20.04, pos: [330, -250] as [number, number] },
  ];
  const lists = Object.fromEntries(
    st.map((s) => [
      s.id,
      frogs.map((f) => ev(f.t + Math.hypot(f.pos[0] - s.east_m, f.pos[1] - s.north_m) / C, bearingTo([s.east_m, s.north_m], f.pos))),
    ]),
  );

  it.each([true, false])('each group holds one frog\'s events (clock_synced %s)', (synced) => {
    const result = locateEventLists(placed({ stations: st.map((s) => ({ ...s, clock_synced: synced })) }), lists);
    expect(result.calls).toHaveLength(2);
    for (const call of result.calls) {
      expect(call.events).toHaveLength(4);
      const frog = frogs.find((f) => Math.hypot(call.fix.east - f.pos[0], call.fix.north - f.pos[1]) < 0.5);
      expect(frog).toBeDefined();
      expect(call.fix.flags).not.toContain('inconsistent');
      expect(call.fix.dropped).toEqual([]);
    }
  });
});

describe('synchronised clocks, UTC and output', () => {
  const origin = { lat_deg: 52.37, lon_deg: 4.89, alt_m: 0 };
  const st = [
    { id: 'reed-1', east_m: 0, north_m: 0 },
    { id: 'reed-2', east_m: 500, north_m: 0 },
    { id: 'reed-3', east_m: 250, north_m: 450 },
  ];
  const bird: [number, number] = [260, 180];
  const start = '2025-05-01T21:00:00.000Z';
  const lists = Object.fromEntries(
    st.map((s) => [s.id, [ev(3 + Math.hypot(bird[0] - s.east_m, bird[1] - s.north_m) / C, bearingTo([s.east_m, s.north_m], bird))]]),
  );
  const json = {
    origin,
    stations: st.map((s) => ({ ...s, clock_synced: true, stream_start_utc: start, heading_deg: 0 })),
  };

  it('uses arrival-time differences, gives UTC, and places the fix on the map', () => {
    const result = locateEventLists(placed(json), lists);
    expect(result.absolute).toBe(true);
    const call = result.calls[0]!;
    expect(call.fix.flags).toContain('time-differences');
    expect(call.utc).toBe('2025-05-01T21:00:03.000Z');
    expect(call.timeS!).toBeCloseTo(3, 4);
    expect(Math.hypot(call.fix.east - bird[0], call.fix.north - bird[1])).toBeLessThan(0.01);
    const back = geodeticToEnu(result.stations.frame!, call.position!);
    expect(back[0]).toBeCloseTo(bird[0], 3);
    expect(back[1]).toBeCloseTo(bird[1], 3);
  });

  it('--no-time-differences leaves them out', () => {
    const call = locateEventLists(placed(json), lists, { useTimeDifferences: false }).calls[0]!;
    expect(call.fix.flags).not.toContain('time-differences');
  });

  it('azimuth plus heading stands in for a missing bearing', () => {
    const heading = 30;
    const rotated = Object.fromEntries(
      Object.entries(lists).map(([id, l]) => [id, l.map((e) => ({ ...e, bearing_deg: undefined, azimuth_deg: e.bearing_deg! - heading }))]),
    );
    const j = { ...json, stations: json.stations.map((s) => ({ ...s, heading_deg: heading })) };
    const call = locateEventLists(placed(j), rotated).calls[0]!;
    expect(Math.hypot(call.fix.east - bird[0], call.fix.north - bird[1])).toBeLessThan(0.01);
    const noHeading = { ...json, stations: json.stations.map(({ heading_deg: _h, ...s }) => s) };
    expect(() => locateEventLists(placed(noHeading), rotated)).toThrow(/bearing_deg.*heading_deg/);
  });

  it('UTC at some stations and stream times at others is refused', () => {
    const mixed = { ...json, stations: json.stations.map((s, i) => (i === 2 ? { id: s.id, east_m: s.east_m, north_m: s.north_m } : s)) };
    expect(() => locateEventLists(placed(mixed), lists)).toThrow(UsageError);
    expect(() => locateEventLists(placed(mixed), lists)).toThrow(/stream_start_utc for 'reed-3'/);
  });

  it('local metres without an origin: CSV and the plot scene work, GeoJSON asks for an origin', () => {
    const local = placed({ stations: st });
    const result = locateEventLists(local, lists);
    expect(() => toGeoJson(result, false)).toThrow(/add "origin"/);
    const csv = toCsv(result, false).trim().split('\n');
    expect(csv).toHaveLength(2);
    const header = csv[0]!.split(',');
    const row = csv[1]!.split(',');
    expect(row[header.indexOf('lat_deg')]).toBe('');
    expect(Number(row[header.indexOf('east_m')])).toBeCloseTo(bird[0], 1);
    const scene = toPlotScene(result);
    expect(scene.origin).toBeNull();
    expect(scene.stations.map((s) => s.id)).toEqual(['reed-1', 'reed-2', 'reed-3']);
    expect(scene.fixes).toHaveLength(1);
    for (const ray of scene.fixes[0]!.rays) {
      expect(Math.hypot(ray.to[0] - bird[0], ray.to[1] - bird[1])).toBeLessThan(0.05);
    }
  });
});

describe('the shipped example station file', () => {
  it('parses and places its stations where its numbers say', async () => {
    const { readFileSync } = await import('node:fs');
    const json: unknown = JSON.parse(readFileSync(new URL('../../configs/stations-marsh-example.json', import.meta.url), 'utf8'));
    const p = placed(json);
    expect(p.stations.map((s) => s.id)).toEqual(['reed-north', 'reed-south', 'dyke', 'willow']);
    // 0.0036 degrees of latitude at 52 N is about 400 m (111.25 km per degree there, from memory).
    expect(p.stations[0]!.enu[1]).toBeGreaterThan(395);
    expect(p.stations[0]!.enu[1]).toBeLessThan(405);
    expect(p.stations[2]!.enu[0]).toBe(500);
  });
});

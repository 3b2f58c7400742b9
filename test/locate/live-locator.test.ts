/**
 * The live locator (src/locate/live-locator.ts) against the file mode and against geodesic
 * truth. Stations and callers are placed on WGS 84 with GeographicLib (geographiclib-geodesic
 * 2.2.0; Karney, J. Geodesy 87, 2013): each station's bearing to a caller is the inverse
 * geodesic azimuth, and arrival times are geodesic distance / c. The live mode is fed the
 * same events in shuffled arrival order with random delays, on a simulated clock; its final
 * fixes must equal the file mode's (locateEventLists) on the same events, and lie near the
 * callers.
 */
import { describe, expect, it } from 'vitest';
import { Geodesic } from 'geographiclib-geodesic';
import { locateEventLists } from '../../src/locate/locate.js';
import { LiveLocator, type LiveFix } from '../../src/locate/live-locator.js';
import { resolveLiveLocateOptions, type LiveLocateOptions } from '../../src/locate/live-options.js';
import { resolveLocateOptions } from '../../src/locate/options.js';
import { geodeticToEnu } from '../../src/locate/geodesy.js';
import { parseStationFile, placeStations, type PlacedStations } from '../../src/locate/stations.js';
import { formatUtc } from '../../src/locate/time.js';
import type { EventRecord } from '../../src/records/record-types.js';
import { gaussian, seeded } from './helpers.js';

const C = 343;
const ORIGIN = { lat: 52.1, lon: 5.2 };
/** Four stations round a marsh, 300 to 400 m from its middle (azimuth from the origin, distance). */
const LAYOUT = [
  { id: 'reed-north', azi: 0, dist: 350 },
  { id: 'dyke-east', azi: 95, dist: 320 },
  { id: 'willow-south', azi: 185, dist: 400 },
  { id: 'hide-west', azi: 270, dist: 300 },
];
const T0 = 1_746_133_200; // 2025-05-01T21:00:00Z

function stationsOf(): { placed: PlacedStations; geo: { id: string; lat: number; lon: number }[] } {
  const geo = LAYOUT.map((l) => {
    const d = Geodesic.WGS84.Direct(ORIGIN.lat, ORIGIN.lon, l.azi, l.dist);
    return { id: l.id, lat: d.lat2!, lon: d.lon2! };
  });
  const json = {
    origin: { lat_deg: ORIGIN.lat, lon_deg: ORIGIN.lon },
    stations: geo.map((g) => ({ id: g.id, lat_deg: g.lat, lon_deg: g.lon, clock_synced: true, bearing_sd_deg: 2 })),
  };
  return { placed: placeStations(parseStationFile(json, 'marsh.json'), 'marsh.json'), geo };
}

interface Made {
  lists: Record<string, EventRecord[]>;
  /** Every event with its station, and the true caller (east, north) of its call. */
  all: { station: string; record: EventRecord; call: number }[];
  callers: [number, number][];
}

/** `calls` calls at random places inside the marsh, `gap` seconds apart; some stations miss some calls. */
function makeCalls(placed: PlacedStations, geo: { id: string; lat: number; lon: number }[], calls: number, gap: number, seed: number): Made {
  const rand = seeded(seed);
  const noise = gaussian(rand);
  const lists: Record<string, EventRecord[]> = {};
  const all: Made['all'] = [];
  const callers: [number, number][] = [];
  for (let k = 0; k < calls; k++) {
    const at = Geodesic.WGS84.Direct(ORIGIN.lat, ORIGIN.lon, rand() * 360, rand() * 200);
    const enu = geodeticToEnu(placed.frame!, { lat_deg: at.lat2!, lon_deg: at.lon2!, alt_m: 0 });
    callers.push([enu[0], enu[1]]);
    const emitted = T0 + 10 + k * gap + rand() * 0.2;
    for (const g of geo) {
      if (rand() < 0.15) continue; // this station did not hear the call
      const inv = Geodesic.WGS84.Inverse(g.lat, g.lon, at.lat2!, at.lon2!);
      const start = emitted + inv.s12! / C + noise() * 0.002;
      const record: EventRecord = {
        start_s: start - T0,
        end_s: start - T0 + 0.3,
        utc: formatUtc(start),
        azimuth_deg: 0,
        bearing_deg: (inv.azi1! + noise() * 2 + 360) % 360,
        spread_deg: 2,
        confidence: 0.9,
        track: k,
      };
      (lists[g.id] ??= []).push(record);
      all.push({ station: g.id, record, call: k });
    }
  }
  return { lists, all, callers };
}

/** Feed events to a live locator on a simulated clock; returns every fix published. */
function runLive(
  placed: PlacedStations,
  arrivals: { station: string; record: EventRecord; atS: number }[],
  live: Partial<LiveLocateOptions>,
  states: { station: string; online: boolean; atS: number }[] = [],
): { fixes: LiveFix[]; locator: LiveLocator } {
  const locator = new LiveLocator(placed, resolveLocateOptions({ speedOfSound: C }), resolveLiveLocateOptions(live), T0);
  const items = [
    ...arrivals.map((a, i) => ({ atS: a.atS, run: () => locator.event(a.station, a.record, `${a.station}#${i}`, a.atS).fixes })),
    ...states.map((s) => ({ atS: s.atS, run: () => (locator.stationState(s.station, s.online, s.atS), []) })),
  ].sort((a, b) => a.atS - b.atS);
  const fixes: LiveFix[] = [];
  let next = 0;
  const end = Math.max(...items.map((i) => i.atS)) + 10;
  for (let t = T0; t <= end; t += 0.1) {
    while (next < items.length && items[next]!.atS <= t) fixes.push(...items[next++]!.run());
    fixes.push(...locator.tick(t));
  }
  fixes.push(...locator.flush());
  return { fixes, locator };
}

/** The last revision of each fix, by id. */
function finalFixes(fixes: readonly LiveFix[]): LiveFix[] {
  const m = new Map<string, LiveFix>();
  for (const f of fixes) m.set(f.id, f);
  return [...m.values()].filter((f) => f.call.fix.ok);
}

const key = (stations: readonly string[]): string => [...stations].sort().join(',');

describe('live locating against the file mode on the same events (GeographicLib truth)', () => {
  const { placed, geo } = stationsOf();
  const made = makeCalls(placed, geo, 40, 4, 11);
  const file = locateEventLists(placed, made.lists, { speedOfSound: C });
  const fileFixes = file.calls.filter((c) => c.fix.ok);

  it('shuffled arrivals within the event latency give the file mode fixes, to the last digit', () => {
    const rand = seeded(5);
    // Each event arrives 0.3 to 2.9 s after its onset (default --event-latency 3 s), so arrival order is shuffled.
    const arrivals = made.all.map((a) => ({ ...a, atS: T0 + a.record.start_s + 0.3 + rand() * 2.6 }));
    const { fixes, locator } = runLive(placed, arrivals, {});
    expect(fixes.every((f) => f.revision === 0 && !f.backfill)).toBe(true);
    const live = finalFixes(fixes);
    console.log(`live: ${live.length} fixes, file mode: ${fileFixes.length}; counts ${JSON.stringify(locator.counts())}`);
    expect(fileFixes.length).toBeGreaterThan(30);
    expect(live.length).toBe(fileFixes.length);
    const byStations = new Map(fileFixes.map((c) => [`${c.utc} ${key(c.fix.used)}`, c]));
    for (const f of live) {
      const c = byStations.get(`${f.call.utc} ${key(f.call.fix.used)}`);
      expect(c, `file mode has a fix at ${f.call.utc} from ${f.call.fix.used.join(',')}`).toBeDefined();
      expect(f.call.fix.east).toBe(c!.fix.east);
      expect(f.call.fix.north).toBe(c!.fix.north);
      expect(f.call.ellipse).toEqual(c!.ellipse);
    }
    expect(locator.counts().late).toBe(0);
    expect(locator.counts().pending).toBe(0);
  });

  it('fixes lie near the true callers: median within 2 m, at least 90 % inside their 95 % ellipse, none beyond 25 m', () => {
    const errors = fileFixes.map((c) => {
      const k = Number(c.events[0]!.origin.split(' event ')[1]) - 1;
      const rec = made.lists[c.events[0]!.station]![k]!;
      const [e, n] = made.callers[rec.track]!;
      return Math.hypot(c.fix.east - e, c.fix.north - n);
    });
    const inside = fileFixes.filter((c, i) => errors[i]! <= c.ellipse!.majorM).length;
    errors.sort((a, b) => a - b);
    console.log(`inside the ellipse's major axis: ${inside} of ${fileFixes.length}; position errors: median ${errors[errors.length >> 1]!.toFixed(2)} m, worst ${errors[errors.length - 1]!.toFixed(2)} m`);
    expect(errors[errors.length >> 1]!).toBeLessThan(2);
    expect(inside / fileFixes.length).toBeGreaterThanOrEqual(0.9);
    expect(errors[errors.length - 1]!).toBeLessThan(25);
  });

  it('a call waits --match-slack + --event-latency + travel time, no longer; then it goes out with the stations it has', () => {
    const call = made.all.filter((a) => a.call === 3);
    const heard = call.slice(0, -1);
    const first = Math.min(...heard.map((a) => T0 + a.record.start_s));
    const locator = new LiveLocator(placed, resolveLocateOptions({ speedOfSound: C }), resolveLiveLocateOptions({ eventLatencyS: 1 }), T0);
    // Every station but the last reports at once; the last never does.
    for (const [i, a] of heard.entries()) locator.event(a.station, a.record, `x${i}`, first + 0.1);
    // Widest window from the seed: the longest station distance / c + 2 x 1 ms (synced clocks) + 0.05 s slack.
    const seed = heard.reduce((a, b) => (a.record.start_s < b.record.start_s ? a : b)).station;
    const far = Math.max(...placed.stations.filter((s) => s.id !== seed).map((s) => Math.hypot(s.enu[0] - placed.stations.find((x) => x.id === seed)!.enu[0], s.enu[1] - placed.stations.find((x) => x.id === seed)!.enu[1])));
    const wait = far / C + 0.002 + 0.05 + 1;
    expect(locator.tick(first + wait - 0.01)).toEqual([]);
    const out = locator.tick(first + wait + 0.01);
    expect(out.length).toBe(1);
    expect(key(out[0]!.call.fix.used)).toBe(key(heard.map((a) => a.station)));
  });

  it('a late event is counted; with --revise it revises the published fix under the same id', () => {
    const call = made.all.filter((a) => a.call === 5);
    expect(call.length).toBeGreaterThanOrEqual(3);
    const lateOne = call[call.length - 1]!;
    const onTime = call.slice(0, -1).map((a) => ({ ...a, atS: T0 + a.record.start_s + 0.5 }));
    const late = { ...lateOne, atS: T0 + lateOne.record.start_s + 8 };
    for (const revise of [false, true]) {
      const { fixes, locator } = runLive(placed, [...onTime, late], { revise });
      expect(locator.counts().late).toBe(1);
      if (!revise) {
        expect(fixes.length).toBe(1);
        expect(fixes[0]!.call.fix.used).not.toContain(lateOne.station);
      } else {
        expect(fixes.length).toBe(2);
        expect(fixes[1]!.id).toBe(fixes[0]!.id);
        expect(fixes[1]!.revision).toBe(1);
        expect(fixes[1]!.backfill).toBe(false);
        expect(fixes[1]!.call.fix.used).toContain(lateOne.station);
        // The revision is the file mode's fix of the whole call.
        const whole = locateEventLists(placed, Object.fromEntries(call.map((a) => [a.station, [a.record]])), { speedOfSound: C }).calls[0]!;
        expect(fixes[1]!.call.fix.east).toBe(whole.fix.east);
        expect(fixes[1]!.call.fix.north).toBe(whole.fix.north);
      }
    }
  });

  it('an offline station is not waited for; its backlog after it returns revises the fixes as backfill, ending at the file mode', () => {
    const off = 'willow-south';
    const offFrom = T0 + 10 + 10 * 4;
    const offTo = T0 + 10 + 25 * 4;
    const rand = seeded(9);
    const arrivals = made.all.map((a) => {
      const on = T0 + a.record.start_s + 0.3 + rand() * 2.6;
      // The station's events while it was away arrive, in order, just after it returns.
      if (a.station === off && on >= offFrom && on < offTo) return { ...a, atS: offTo + 0.5 + (a.record.start_s + T0 - offFrom) / 1000 };
      return { ...a, atS: on };
    });
    const states = [
      { station: off, online: true, atS: T0 },
      { station: off, online: false, atS: offFrom },
      { station: off, online: true, atS: offTo },
    ];
    const { fixes, locator } = runLive(placed, arrivals, {}, states);
    const c = locator.counts();
    console.log(`offline and back: ${fixes.length} publications, counts ${JSON.stringify(c)}`);
    expect(c.backfilled).toBeGreaterThan(5);
    expect(c.late).toBe(0);
    const backfills = fixes.filter((f) => f.backfill);
    expect(backfills.length).toBe(c.backfilled);
    for (const b of backfills) expect(b.call.fix.used).toContain(off);
    // Revisions keep the id of the fix they revise.
    expect(backfills.filter((b) => b.revision > 0).every((b) => fixes.some((f) => f.id === b.id && f.revision === 0))).toBe(true);
    const live = finalFixes(fixes);
    expect(live.length).toBe(fileFixes.length);
    const byStations = new Map(fileFixes.map((f) => [`${f.utc} ${key(f.fix.used)}`, f]));
    let same = 0;
    for (const f of live) {
      const m = byStations.get(`${f.call.utc} ${key(f.call.fix.used)}`);
      if (m && m.fix.east === f.call.fix.east && m.fix.north === f.call.fix.north) same++;
    }
    console.log(`after backfill: ${same} of ${live.length} fixes identical to the file mode`);
    expect(same).toBe(live.length);
  });
});

describe('live locator bounds and message checks', () => {
  const { placed, geo } = stationsOf();

  it('holds at most --max-pending undecided events (the oldest are decided early and counted), and forgets beyond --max-history', () => {
    const made = makeCalls(placed, geo, 200, 0.05, 3);
    const locator = new LiveLocator(placed, resolveLocateOptions({ speedOfSound: C }), resolveLiveLocateOptions({ maxPending: 50, maxHistory: 100, eventLatencyS: 100 }), T0);
    let peak = 0;
    for (const [i, a] of made.all.entries()) {
      locator.event(a.station, a.record, `#${i}`, T0 + 10);
      locator.tick(T0 + 10);
      peak = Math.max(peak, locator.counts().pending);
    }
    const c = locator.counts();
    expect(made.all.length).toBeGreaterThan(500);
    expect(peak).toBeLessThanOrEqual(51);
    expect(c.forced).toBeGreaterThan(0);
    expect(c.kept).toBeLessThanOrEqual(100);
  });

  it('events older than --backfill-window are left out and counted', () => {
    const locator = new LiveLocator(placed, resolveLocateOptions({ speedOfSound: C }), resolveLiveLocateOptions({ backfillWindowS: 60 }), T0);
    const rec: EventRecord = { start_s: 0, end_s: 0.2, utc: formatUtc(T0), azimuth_deg: 0, bearing_deg: 10, spread_deg: 1, confidence: 0.9, track: 1 };
    locator.event('reed-north', rec, 'a', T0 + 61);
    locator.event('dyke-east', rec, 'b', T0 + 59);
    expect(locator.counts().stale).toBe(1);
    expect(locator.counts().pending).toBe(1);
  });

  it('drops repeated seq numbers and counts lost ones; a station that counts again from 1 is followed', () => {
    const locator = new LiveLocator(placed, resolveLocateOptions(), resolveLiveLocateOptions(), T0);
    expect([1, 2, 2, 3, 6, 5, 7, 1, 2].map((s) => locator.acceptSeq('reed-north', s))).toEqual([true, true, false, true, true, false, true, true, true]);
    expect(locator.counts().repeats).toBe(2);
    expect(locator.counts().lost).toBe(2);
  });

  it('says a station going offline and coming back once per change', () => {
    const locator = new LiveLocator(placed, resolveLocateOptions(), resolveLiveLocateOptions(), T0);
    expect(locator.stationState('dyke-east', true, T0)).toBeNull();
    expect(locator.stationState('dyke-east', false, T0 + 1)).toMatch(/offline/);
    expect(locator.stationState('dyke-east', false, T0 + 2)).toBeNull();
    expect(locator.stationState('dyke-east', true, T0 + 3)).toMatch(/back online/);
    expect(locator.stationState('dyke-east', true, T0 + 4)).toBeNull();
  });
});

describe('the matching gate (file and live mode alike)', () => {
  const { placed, geo } = stationsOf();
  const made = makeCalls(placed, geo, 12, 4, 23);

  it('a bearing 25 deg off (about 10 sigma at 2 deg) does not join the call at --outlier-sigma 3; with the gate wide open it does', () => {
    // The first call that all four stations heard.
    const k = [...Array(12).keys()].find((c) => made.all.filter((a) => a.call === c).length === 4)!;
    const call = made.all.filter((a) => a.call === k).sort((a, b) => a.record.start_s - b.record.start_s);
    expect(call.length).toBe(4);
    // The last to hear it (not the seed of the group) gets the wrong bearing.
    const bad = call[call.length - 1]!;
    const lists = Object.fromEntries(call.map((a) => [a.station, [a === bad ? { ...a.record, bearing_deg: (a.record.bearing_deg! + 25) % 360 } : a.record]]));
    const gated = locateEventLists(placed, lists, { speedOfSound: C, outlierSigma: 3 });
    expect(gated.calls.length).toBe(1);
    expect(gated.calls[0]!.events.map((e) => e.station)).not.toContain(bad.station);
    expect(gated.unmatched.map((e) => e.station)).toEqual([bad.station]);
    const open = locateEventLists(placed, lists, { speedOfSound: C, outlierSigma: 100 });
    expect(open.calls[0]!.events.map((e) => e.station)).toContain(bad.station);
  });
});

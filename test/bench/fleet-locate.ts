/**
 * Live locating under a fleet's load: 16 stations on a 4 x 4 grid 250 m apart (GPS clocks),
 * callers at random places, each call heard by the stations within 300 m, at a rate that gives
 * every station about 10 events per second. Events reach the live locator
 * (src/locate/live-locator.ts) in shuffled order 0.3 to 2.9 s after their onset, on a
 * simulated clock ticking every 0.1 s, as `locate --mqtt` drives it (the broker is left out:
 * this measures the matching and fixing core; about 37 calls a second, each heard by 4.3
 * stations on average). One station drops off from minute 10 to 15 of every hour and comes
 * back with its backlog.
 *
 * Reports, for the simulated span (default 0.4 h, past the 15-minute --backfill-window so that the
 * kept calls reach their bound; `--hours 24` for a day, hours of CPU): CPU seconds per
 * simulated second (the share of one core the core needs; real time needs below 1), events
 * and fixes per second, and the live heap after a full collection at each tenth of the run
 * (flat = bounded; the pending events and kept calls are bounded by time and by
 * --max-pending / --max-history). Run alone with `npx tsx test/bench/fleet-locate.ts [--hours H]`.
 */
import { pathToFileURL } from 'node:url';
import { setFlagsFromString } from 'node:v8';
import { runInNewContext } from 'node:vm';
import { LiveLocator } from '../../src/locate/live-locator.js';
import { resolveLiveLocateOptions } from '../../src/locate/live-options.js';
import { resolveLocateOptions } from '../../src/locate/options.js';
import { parseStationFile, placeStations } from '../../src/locate/stations.js';
import { formatUtc } from '../../src/locate/time.js';
import type { EventRecord } from '../../src/records/record-types.js';
import { seededUniform } from '../helpers/random.js';

const C = 343;
const SPACING_M = 250;
const HEARING_M = 300;
const EVENTS_PER_STATION_S = 10;
const T0 = 1_746_133_200;

export interface FleetBenchResult {
  hours: number;
  stations: number;
  events: number;
  fixes: number;
  cpuSeconds: number;
  /** CPU seconds per simulated second: the share of one core. */
  coreShare: number;
  heapMiB: number[];
  /** CPU share of one core in each tenth of the run (flat = no growth with time). */
  tenthShares: number[];
  counts: ReturnType<LiveLocator['counts']>;
}

function collectGarbage(): void {
  setFlagsFromString('--expose_gc');
  (runInNewContext('gc') as () => void)();
}

export function runFleetLocateBench(hours = 0.4): FleetBenchResult {
  const ids: string[] = [];
  const stations = [];
  for (let i = 0; i < 4; i++) {
    for (let j = 0; j < 4; j++) {
      const id = `st-${i}${j}`;
      ids.push(id);
      stations.push({ id, east_m: i * SPACING_M, north_m: j * SPACING_M, clock_synced: true, bearing_sd_deg: 3 });
    }
  }
  const placed = placeStations(parseStationFile({ origin: { lat_deg: 52, lon_deg: 5 }, stations }, 'bench'), 'bench');
  const at = new Map(placed.stations.map((s) => [s.id, s.enu]));
  const rand = seededUniform(17);
  const locator = new LiveLocator(placed, resolveLocateOptions({ speedOfSound: C }), resolveLiveLocateOptions(), T0);
  const span = hours * 3600;
  // Calls per second for ~10 events per station per second: measure the mean number of hearers first.
  let hearers = 0;
  for (let k = 0; k < 2000; k++) {
    const x = rand() * 3 * SPACING_M;
    const y = rand() * 3 * SPACING_M;
    hearers += ids.filter((id) => Math.hypot(at.get(id)![0] - x, at.get(id)![1] - y) <= HEARING_M).length;
  }
  const callsPerS = (EVENTS_PER_STATION_S * ids.length) / (hearers / 2000);
  type Arrival = { atS: number; station: string; rec: EventRecord; n: number };
  let queue: Arrival[] = [];
  let events = 0;
  let fixes = 0;
  let nextCall = T0;
  let n = 0;
  const heap: number[] = [];
  const tenthShares: number[] = [];
  collectGarbage();
  const cpu0 = process.cpuUsage();
  let cpuTenth = process.cpuUsage();
  for (let t = T0; t < T0 + span; t += 0.1) {
    // New calls in this tick, arriving later in shuffled order.
    while (nextCall < t + 0.1) {
      const x = rand() * 3 * SPACING_M;
      const y = rand() * 3 * SPACING_M;
      for (const id of ids) {
        const [e, nn] = at.get(id)!;
        const d = Math.hypot(e - x, nn - y);
        if (d > HEARING_M) continue;
        const onset = nextCall + d / C + (rand() - 0.5) * 0.004;
        const bearing = ((Math.atan2(x - e, y - nn) * 180) / Math.PI + (rand() - 0.5) * 6 + 360) % 360;
        queue.push({
          atS: onset + 0.3 + rand() * 2.6,
          station: id,
          n: ++n,
          rec: { start_s: onset - T0, end_s: onset - T0 + 0.2, utc: formatUtc(onset), azimuth_deg: 0, bearing_deg: bearing, spread_deg: 2, confidence: 0.9, track: 1 },
        });
      }
      nextCall += -Math.log(1 - rand()) / callsPerS;
    }
    // One station away for five minutes in every hour; its events come back after it returns.
    const inHour = (t - T0) % 3600;
    const away = inHour >= 600 && inHour < 900;
    if (inHour >= 600 && inHour < 600.1) locator.stationState('st-11', false, t);
    if (inHour >= 900 && inHour < 900.1) locator.stationState('st-11', true, t);
    const due = queue.filter((a) => a.atS <= t && !(away && a.station === 'st-11'));
    queue = queue.filter((a) => !(a.atS <= t && !(away && a.station === 'st-11')));
    due.sort((a, b) => a.atS - b.atS);
    for (const a of due) {
      events++;
      fixes += locator.event(a.station, a.rec, `${a.station}#${a.n}`, t).fixes.length;
    }
    fixes += locator.tick(t).length;
    if (Math.round((t - T0) * 10) % Math.round(span) === 0 && t > T0) {
      const u = process.cpuUsage(cpuTenth);
      tenthShares.push((u.user + u.system) / 1e6 / (span / 10));
      collectGarbage();
      cpuTenth = process.cpuUsage();
      heap.push(process.memoryUsage().heapUsed / 2 ** 20);
    }
  }
  const used = process.cpuUsage(cpu0);
  const cpuSeconds = (used.user + used.system) / 1e6;
  return { hours, stations: ids.length, events, fixes, cpuSeconds, coreShare: cpuSeconds / span, heapMiB: heap, tenthShares, counts: locator.counts() };
}

export function formatFleetBench(r: FleetBenchResult): string {
  const s = r.hours * 3600;
  return [
    `live locate core, ${r.stations} stations, ${r.hours} h simulated: ${r.events} events (${(r.events / s / r.stations).toFixed(1)} per station per s), ${r.fixes} fixes published`,
    `  CPU ${r.cpuSeconds.toFixed(1)} s for ${s} s: ${(100 * r.coreShare).toFixed(1)} % of one core (real time needs below 100 %)`,
    `  CPU share in each tenth (%): ${r.tenthShares.map((x) => (100 * x).toFixed(1)).join(' ')} (target: flat)`,
    `  live heap after GC at each tenth (MiB): ${r.heapMiB.map((h) => h.toFixed(1)).join(' ')} (target: flat)`,
    `  counts at the end: ${JSON.stringify(r.counts)}`,
  ].join('\n');
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const k = process.argv.indexOf('--hours');
  const hours = k > 0 ? Number(process.argv[k + 1]) : 0.4;
  console.log(formatFleetBench(runFleetLocateBench(hours)));
}

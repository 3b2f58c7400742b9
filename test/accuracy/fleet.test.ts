/**
 * A simulated fleet (locate issue): three stations 50 m from a caller in free field, 120
 * degrees apart; each station's recording is rendered by the simulator from the same scene
 * seed (the same calls), scanned by bearline, and the events of all three go through
 * locateEventLists. Target: the position within 1 m. The true position is the scene's; the
 * bearings of the fix are compass bearings (interface.md: azimuth + heading).
 */
import { describe, expect, it } from 'vitest';
import { locateEventLists } from '../../src/locate/locate.js';
import { parseStationFile, placeStations } from '../../src/locate/stations.js';
import type { EventRecord } from '../../src/records/record-types.js';
import { DEG, render, scanEvents } from './helpers.js';
import { tempDir } from '../helpers/temp-dir.js';

const CALLER = [0, 0, 1.5];
const RANGE = 50;
const STATIONS = [
  { id: 'reeds-north', bearingFromCaller: 10, heading: 200 },
  { id: 'boardwalk', bearingFromCaller: 130, heading: 290 },
  { id: 'willow', bearingFromCaller: 250, heading: 45 },
].map((s) => ({ ...s, east: RANGE * Math.sin(s.bearingFromCaller * DEG), north: RANGE * Math.cos(s.bearingFromCaller * DEG) }));

describe('simulated fleet of three stations around a caller at 50 m', () => {
  it('positions from the scanned events of the three stations lie within 1 m of the caller', () => {
    const dir = tempDir('accuracy').dir;
    const lists: Record<string, EventRecord[]> = {};
    for (const s of STATIONS) {
      const wav = render(dir, s.id, {
        sample_rate_hz: 48000,
        duration_s: 5,
        seed: 21,
        speed_of_sound_m_s: 343,
        array: { geometry: 'square-20cm', position_m: [s.east, s.north, 1.5], heading_deg: s.heading },
        sources: [
          {
            name: 'caller',
            position_m: CALLER,
            signal: { type: 'noise', low_hz: 400, high_hz: 8000 },
            level: { db_spl_at_1m: 100 }, // about -44 dBFS at 50 m, far above the floor (--event-enter-snr)
            calls: { start_s: 0.3, length_s: 0.15, every_s: 0.8, jitter_s: 0.1 },
          },
        ],
        full_scale_db_spl: 110,
        noise: { floor_dbfs: -75 },
      });
      lists[s.id] = scanEvents(wav, '--speed-of-sound', '343');
      console.log(`${s.id}: ${lists[s.id]!.length} events, bearings ${lists[s.id]!.map((e) => e.bearing_deg?.toFixed(2)).join(' ')} (true ${((s.bearingFromCaller + 180) % 360).toFixed(2)})`);
    }
    const file = parseStationFile(
      { stations: STATIONS.map((s) => ({ id: s.id, east_m: s.east, north_m: s.north, up_m: 1.5, heading_deg: s.heading })) },
      'fleet test',
    );
    const result = locateEventLists(placeStations(file, 'fleet test'), lists, { speedOfSound: 343 });
    const fixes = result.calls.filter((c) => c.fix.ok);
    const errors = fixes.map((c) => Math.hypot(c.fix.east - CALLER[0]!, c.fix.north - CALLER[1]!));
    console.log(`fleet: ${result.calls.length} matched calls, ${fixes.length} fixes, ${result.unmatched.length} unmatched events; position errors (m): ${errors.map((e) => e.toFixed(3)).join(' ')}`);
    expect(fixes.length).toBeGreaterThanOrEqual(4);
    for (const e of errors) expect(e).toBeLessThan(1);
  });
});

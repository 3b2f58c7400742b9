/**
 * Events straight overhead on a flat array (src/track/event-cutter.ts, ZENITH_DEG). A flat array
 * (all mics in a horizontal plane) reads zero delays on every pair as straight overhead, and so
 * reads sound that reaches every mic at once, such as the coherent part of wind buffeting, with
 * an azimuth that means nothing (geometry of plane-wave delays, common practice, no source).
 * Scenes rendered by bearline's simulator, whose delays are checked against sox and numpy
 * (test/sim/); the truth beside each file scores the tracks (purity and completeness as used in
 * multi-target tracking evaluation, common practice).
 */
import { describe, expect, it } from 'vitest';
import { fieldScene, render, scanScored } from './helpers.js';
import { tempDir } from '../helpers/temp-dir.js';

const dir = tempDir('accuracy').dir;

/** A 48 kHz scene of one caller in wind. */
const oneCaller = (geometry: string, seed: number, durationS: number, source: Record<string, unknown>, windDbfs: number) =>
  fieldScene({ durationS, seed, geometry, sources: [source], noise: { floor_dbfs: -62, wind_dbfs: windDbfs } });

describe('a chorus in gusty wind on a flat array', () => {
  // A chorus 61 deg west of the array's front, 18 dB over wind at -48 dBFS, calling in bouts of
  // six with 9 s between bouts, on a 10 cm triangle. As each call ends its direction fades into
  // the wind's zero delays and the readings walk up to the zenith.
  const chorus = {
    name: 'chorus',
    position_m: [-9, 5, 0.2],
    signal: { type: 'tone', f0_hz: 780, harmonics: [1, 0.4, 0.2], pulse_rate_hz: 22, pulse_duty: 0.5 },
    level: { dbfs_at_array: -30 },
    calls: { start_s: 1, length_s: 0.3, every_s: 0.8, jitter_s: 0.1, per_bout: 6, bout_gap_s: 9 },
  };
  const wav = render(dir, 'overhead-wind', oneCaller('triangle-10cm', 71, 45, chorus, -48));
  const run = scanScored(wav);

  it('writes no event within 12 deg of straight overhead, says how many it left out, and keeps every call of the chorus on one track', () => {
    const high = run.events.filter((e) => Math.abs(e.elevation_deg ?? 0) > 78);
    const chorus = run.scores.sources.find((s) => s.source === 'chorus')!;
    const left = /(\d+) events? (?:was|were) read within 12 deg of straight overhead and left out/.exec(run.stderr);
    console.log(`chorus in wind: ${run.events.length} events, chorus ${chorus.calls} calls ${(chorus.completeness * 100).toFixed(0)} % on track ${chorus.track}; left out overhead: ${left?.[1] ?? 0}`);
    expect(high).toEqual([]);
    // before the rule: 39 of the 66 events lay at 83-89 deg of elevation, azimuths all round the circle
    expect(left).not.toBeNull();
    expect(Number(left![1])).toBeGreaterThan(5);
    expect(chorus.completeness).toBe(1);
    expect(run.events.filter((e) => e.track === chorus.track).length).toBeGreaterThanOrEqual(chorus.calls);
  });
});

describe('a caller 64 deg up on a flat array', () => {
  // A broadband caller 14 m over and 6 m beside a 10 cm square (elevation 64 deg): high, but not
  // overhead; its events stay.
  const high = {
    name: 'high',
    position_m: [4, 5, 14],
    signal: { type: 'noise', low_hz: 1500, high_hz: 7000 },
    level: { dbfs_at_array: -30 },
    calls: { start_s: 0.5, length_s: 0.15, every_s: 0.5, jitter_s: 0.05 },
  };
  const wav = render(dir, 'overhead-high', oneCaller('square-10cm', 74, 8, high, -50));
  const run = scanScored(wav);

  it('keeps an event for each of its calls on one track', () => {
    const high = run.scores.sources.find((s) => s.source === 'high')!;
    console.log(`caller 64 deg up: ${high.calls} calls, ${(high.completeness * 100).toFixed(0)} % on track ${high.track}, elevations ${run.events.map((e) => e.elevation_deg?.toFixed(0)).join(' ')}`);
    expect(high.calls).toBeGreaterThan(10);
    expect(high.completeness).toBe(1);
  });
});

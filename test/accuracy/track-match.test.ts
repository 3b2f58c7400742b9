/**
 * The demo's closing table (compareTracks, src/accuracy/track-match.ts) against a scene
 * rendered by the simulator: the true direction of each source is computed here from the
 * scene's own geometry (straight path, sound leaving the source |p| / c before it arrives),
 * independently of the truth file; the circular mean is that of Mardia and Jupp,
 * Directional Statistics (2000), written out here.
 */
import { describe, expect, it } from 'vitest';
import { compareTracks, truthAzimuthDuring } from '../../src/accuracy/track-match.js';
import { indexTruth, TRUTH_STEP_S } from '../../src/accuracy/truth.js';
import type { EventRecord } from '../../src/records/record-types.js';
import type { TrackSummary } from '../../src/track/types.js';
import { DEG, render, truthOf } from './helpers.js';
import { tempDir } from '../helpers/temp-dir.js';

const R = 10;
const C = 343;
const at = (azDeg: number): number[] => [R * Math.sin(azDeg * DEG), R * Math.cos(azDeg * DEG), 1.5];
const P0 = at(-20);
const P1 = at(20);
const PASS_S = 4;

/** Azimuth of the mover as heard at the array at time t: solve t_e = t - |p(t_e)| / c. */
function moverAzimuth(t: number): number {
  let te = t - R / C;
  let p = P0;
  for (let i = 0; i < 5; i++) {
    const f = Math.min(1, Math.max(0, te / PASS_S));
    p = P0.map((x, k) => x + f * (P1[k]! - x));
    te = t - Math.hypot(p[0]!, p[1]!, p[2]! - 1.5) / C;
  }
  return Math.atan2(p[0]!, p[1]!) / DEG;
}

function meanDeg(a: readonly number[]): number {
  const s = a.reduce((x, d) => x + Math.sin(d * DEG), 0);
  const c = a.reduce((x, d) => x + Math.cos(d * DEG), 0);
  return Math.atan2(s, c) / DEG;
}

const event = (track: number, startS: number, endS: number, azimuthDeg: number): EventRecord => ({
  start_s: startS,
  end_s: endS,
  azimuth_deg: azimuthDeg,
  spread_deg: 0,
  confidence: 0.9,
  track,
});

describe('the demo table against the simulator truth', () => {
  const wav = render(tempDir('accuracy').dir, 'table', {
    sample_rate_hz: 16000,
    duration_s: 4,
    seed: 3,
    speed_of_sound_m_s: C,
    array: { geometry: 'square-20cm', position_m: [0, 0, 1.5], heading_deg: 0 },
    sources: [
      {
        name: 'mover',
        path: [{ time_s: 0, position_m: P0 }, { time_s: PASS_S, position_m: P1 }],
        signal: { type: 'noise', low_hz: 500, high_hz: 4000 },
        level: { dbfs_at_array: -25 },
        calls: { start_s: 0.2, length_s: 0.1, every_s: 0.5 },
      },
      {
        name: 'frog',
        position_m: at(100),
        signal: { type: 'noise', low_hz: 500, high_hz: 4000 },
        level: { dbfs_at_array: -25 },
        calls: { start_s: 0.45, length_s: 0.1, every_s: 0.5 },
      },
    ],
    noise: { floor_dbfs: -70 },
  });
  const truth = indexTruth(truthOf(wav));
  const calls = (name: string) => truth.sources.find((s) => s.name === name)!.calls;

  it('the error is that of the mean shown, over the times of all the track\'s events; a track without events is listed', () => {
    const mover = calls('mover');
    const frog = calls('frog');
    expect(mover.length).toBeGreaterThan(6);
    expect(frog.length).toBeGreaterThan(6);
    const mid = (c: { startS: number; endS: number }): number => (c.startS + c.endS) / 2;
    // Track 1 follows the mover 2 degrees clockwise of it.
    const events = mover.map((c) => event(1, c.startS, c.endS, moverAzimuth(mid(c)) + 2));
    // Track 2 follows the frog 1.5 degrees off, and also took one call of the mover.
    events.push(...frog.map((c) => event(2, c.startS, c.endS, 101.5)));
    events.push(event(2, mover[3]!.startS, mover[3]!.endS, moverAzimuth(mid(mover[3]!))));
    // Track 4 holds one event while the mover was silent (between its calls 2 and 3).
    const gapStart = mover[2]!.endS + 0.04;
    events.push(event(4, gapStart, gapStart + 0.04, moverAzimuth(gapStart + 0.02)));
    const summary: TrackSummary[] = [3].map((track) => ({
      track, events: 0, azimuthDeg: -60, spreadDeg: 1, elevationDeg: null, activeS: 0, hops: 4,
      firstSeenS: 1, lastSeenS: 1.1, alive: false, mirror: null, mirrorAxisDeg: null,
    }));

    const cmp = compareTracks(events, truth, TRUTH_STEP_S, summary);
    expect(cmp.tracks.map((t) => t.track)).toEqual([1, 2, 3, 4]);
    const [t1, t2, t3, t4] = cmp.tracks;

    expect(t1!.source).toBe('mover');
    // Within 0.1 degree: the truth steps are 10 ms long, the mover turns 10 degrees per second.
    expect(Math.abs(t1!.truthAzimuthDeg! - meanDeg(mover.map((c) => moverAzimuth(mid(c)))))).toBeLessThan(0.1);
    expect(Math.abs(t1!.errorDeg! - 2)).toBeLessThan(0.1);

    // The frog is fixed at 100 degrees; the mean of all 8+ events is pulled towards the mover's
    // call, and the error is that of this mean (the matched events alone would say +1.5).
    expect(t2!.source).toBe('frog');
    expect(t2!.matchedEvents).toBe(frog.length);
    expect(t2!.truthAzimuthDeg!).toBeCloseTo(100, 1);
    const shown = meanDeg(events.filter((e) => e.track === 2).map((e) => e.azimuth_deg));
    expect(t2!.azimuthDeg).toBeCloseTo(shown, 6);
    expect(t2!.errorDeg!).toBeCloseTo(shown - 100, 1);
    expect(Math.abs(t2!.errorDeg! - 1.5)).toBeGreaterThan(1);

    expect(t3).toMatchObject({ track: 3, events: 0, source: null, azimuthDeg: -60, errorDeg: null });

    // No source was active during track 4's event: it counts as unmatched, has no source.
    expect(t4!.source).toBeNull();
    expect(cmp.unmatchedEvents).toBe(1);
    expect(cmp.sources.find((s) => s.source === 'mover')!.tracks).toEqual([1]);
    // Between its calls the mover's direction is interpolated between its calls' records.
    const moverTruth = truth.sources.find((s) => s.name === 'mover')!;
    expect(Math.abs(truthAzimuthDuring(moverTruth, gapStart, gapStart + 0.04) - moverAzimuth(gapStart + 0.02))).toBeLessThan(0.1);
    const frogTruth = truth.sources.find((s) => s.name === 'frog')!;
    expect(truthAzimuthDuring(frogTruth, 0, 0.01)).toBeCloseTo(100, 1);
  });
});

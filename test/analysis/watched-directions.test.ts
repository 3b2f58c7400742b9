/**
 * A followed caller heard under a louder one (src/analysis/watched-directions.ts): the tracker
 * hands the analysis its tracks' predictions each hop, and the analysis looks for them in the
 * hop's single bins that do not fit the winner. Two scenes, each a caller calling 0.1 s every
 * 0.55 s at -40 deg with a broadband caller calling 0.3 s every 0.8 s at 25 deg, so that about
 * half of the first caller's calls fall within the second's: on a 10 cm triangle with both
 * broadband at the same level (the louder one wins every band), and on a 20 cm square with the
 * first a 3.6-2.5 kHz sweep (above the square's aliasing limit, 0.86 kHz: no bin gives its
 * direction by itself); and the sweep calling on as the broadband caller stops. Rendered by the project's simulator (its delays are checked against sox
 * and numpy in test/sim/); truth from its truth file; completeness and purity as in
 * multi-target tracking evaluation (src/accuracy/track-scores.ts, common practice).
 */
import { afterAll, describe, expect, it } from 'vitest';
import { indexTruth, TRUTH_STEP_S } from '../../src/accuracy/truth.js';
import { scoreTracks } from '../../src/accuracy/track-scores.js';
import { angleDiffDeg } from '../../src/track/circular.js';
import { DEG, render, scanEvents, truthOf } from '../accuracy/helpers.js';
import { tempDir } from '../helpers/temp-dir.js';

const tmp = tempDir();
afterAll(() => tmp.cleanup());
const at = (azDeg: number, r: number, z: number): number[] => [r * Math.sin(azDeg * DEG), r * Math.cos(azDeg * DEG), z];
const QUIET_AZ = -40;
const LOUD_AZ = 25;
const scene = (array: string, signal: unknown, seed: number) => ({
  sample_rate_hz: 48000,
  duration_s: 10,
  seed,
  speed_of_sound_m_s: 343,
  array: { geometry: array, position_m: [0, 0, 1.5], heading_deg: 0 },
  sources: [
    { name: 'a', position_m: at(QUIET_AZ, 10, 2.5), signal, level: { dbfs_at_array: -26 }, calls: { start_s: 0.3, length_s: 0.1, every_s: 0.55, jitter_s: 0.03 } },
    { name: 'b', position_m: at(LOUD_AZ, 12, 2.5), signal: { type: 'noise', low_hz: 500, high_hz: 8000 }, level: { dbfs_at_array: -26 }, calls: { start_s: 0.5, length_s: 0.3, every_s: 0.8, jitter_s: 0.05 } },
  ],
  noise: { floor_dbfs: -60 },
});

describe('a followed caller heard under a louder broadband caller', () => {
  for (const [label, array, signal, seed] of [
    ['broadband under broadband, 10 cm triangle', 'triangle-10cm', { type: 'noise', low_hz: 500, high_hz: 8000 }, 31],
    ['a high sweep under broadband, 20 cm square', 'square-20cm', { type: 'sweep', start_hz: 3600, end_hz: 2500, shape: 'exponential', harmonics: [1, 0.3] }, 32],
  ] as const) {
    it(`${label}: its calls that the other overlaps are found on its own track`, () => {
      const wav = render(tmp.dir, `watched-${seed}`, scene(array, signal, seed));
      const events = scanEvents(wav);
      const truth = indexTruth(truthOf(wav));
      const scores = scoreTracks(events, truth, TRUTH_STEP_S);
      const a = scores.sources.find((s) => s.source === 'a')!;
      const b = scores.sources.find((s) => s.source === 'b')!;
      const calls = truth.sources.find((s) => s.name === 'a')!.calls;
      const loud = truth.sources.find((s) => s.name === 'b')!.calls;
      const overlapped = calls.filter((c) => loud.some((d) => d.startS < c.endS && d.endS > c.startS));
      const found = overlapped.filter((c) => events.some((e) => e.track === a.track && e.start_s < c.endS && e.end_s > c.startS && Math.abs(angleDiffDeg(e.azimuth_deg, QUIET_AZ)) <= 5));
      console.log(`${label}: a's calls overlapped ${overlapped.length}, found on its track ${found.length}; completeness a ${a.completeness.toFixed(2)}, b ${b.completeness.toFixed(2)}; purity ${scores.tracks.map((t) => t.purity.toFixed(2)).join(' ')}`);
      // Measured (before the watched directions): triangle 7 of 8 overlapped calls (2), a's
      // completeness 0.94 (0.61); square 7 of 8 (1), 0.94 (0.56; 6 of 8 and 0.89 before bins at
      // their noise floor were left out of the watch); b 1.00 and every track pure either way.
      expect(overlapped.length).toBeGreaterThanOrEqual(6);
      expect(found.length / overlapped.length).toBeGreaterThanOrEqual(0.7);
      expect(a.completeness).toBeGreaterThanOrEqual(0.85);
      expect(b.completeness).toBeGreaterThanOrEqual(0.95);
      expect(a.track).not.toBe(b.track);
      for (const t of scores.tracks) expect(t.purity).toBe(1);
    });
  }
});

describe('a followed caller calling on as a louder caller stops', () => {
  // The 3.6-2.5 kHz sweep of the second scene above at -40 deg, 0.15 s every 0.8 s, on a 20 cm
  // square; the broadband caller at -10 deg calls 0.3 s every 1.6 s, ending as every other call
  // of the sweep starts. For about 0.1 s after its call the analysis' memory still gives the hop
  // to the broadband caller, and the bins it filled, back at their noise floor, held most of the
  // evidence the watched sweep was weighed against (src/analysis/watched-directions.ts,
  // collectForeign).
  it('its calls that start as the other stops are found on its own track', () => {
    const wav = render(tmp.dir, 'watched-after', {
      ...scene('square-20cm', { type: 'sweep', start_hz: 3600, end_hz: 2500, shape: 'exponential', harmonics: [1, 0.3] }, 41),
      sources: [
        { name: 'a', position_m: at(QUIET_AZ, 10, 2.5), signal: { type: 'sweep', start_hz: 3600, end_hz: 2500, shape: 'exponential', harmonics: [1, 0.3] }, level: { dbfs_at_array: -26 }, calls: { start_s: 0.8, length_s: 0.15, every_s: 0.8, jitter_s: 0 } },
        { name: 'b', position_m: at(-10, 12, 2.5), signal: { type: 'noise', low_hz: 500, high_hz: 8000 }, level: { dbfs_at_array: -26 }, calls: { start_s: 1.3, length_s: 0.3, every_s: 1.6, jitter_s: 0 } },
      ],
    });
    const events = scanEvents(wav);
    const truth = indexTruth(truthOf(wav));
    const scores = scoreTracks(events, truth, TRUTH_STEP_S);
    const a = scores.sources.find((s) => s.source === 'a')!;
    const calls = truth.sources.find((s) => s.name === 'a')!.calls;
    const loud = truth.sources.find((s) => s.name === 'b')!.calls;
    const after = calls.filter((c) => loud.some((d) => Math.abs(d.endS - c.startS) < 0.05));
    const found = after.filter((c) => events.some((e) => e.track === a.track && e.start_s < c.endS && e.end_s > c.startS && Math.abs(angleDiffDeg(e.azimuth_deg, QUIET_AZ)) <= 5));
    console.log(`calling on as the other stops: a's calls right after b's ${after.length}, found on its track ${found.length}; completeness a ${a.completeness.toFixed(2)}; purity ${scores.tracks.map((t) => t.purity.toFixed(2)).join(' ')}`);
    // Measured: 6 of 6, completeness 1.00; with the bins at their noise floor counted (before),
    // 0 of 6 and 0.50 (on a 10 cm tetrahedron 5 of 6 against 0).
    expect(after.length).toBeGreaterThanOrEqual(5);
    expect(found.length).toBeGreaterThanOrEqual(after.length - 1);
    expect(a.completeness).toBeGreaterThanOrEqual(0.9);
    for (const t of scores.tracks) expect(t.purity).toBe(1);
  });
});

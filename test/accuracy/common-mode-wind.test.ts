/**
 * A sound at every mic at once on an array in three dimensions (src/analysis/closure.ts). Zero
 * delay on every pair fits no direction of a tetrahedron (plane-wave delays, (p_a - p_b) . u / c,
 * interface.md: zero on three independent baselines needs u = 0; common practice, no source), so
 * a search over directions settles anywhere. The scene: bearline's simulator, whose delays are
 * checked against sox and numpy (test/sim/); its wind has a part common to every mic with no
 * delay (src/sim/noise.ts), as buffeting of the whole mount would. The truth beside the file
 * scores the tracks (purity and completeness as used in multi-target tracking evaluation, common
 * practice).
 */
import { describe, expect, it } from 'vitest';
import { fieldScene, render, scanScored } from './helpers.js';
import { tempDir } from '../helpers/temp-dir.js';

const dir = tempDir('accuracy').dir;

const tone = (f0: number) => ({ type: 'tone', f0_hz: f0, harmonics: [1, 0.45, 0.2] });

describe('two choruses on a 10 cm tetrahedron in gusty wind', () => {
  // Two choruses (bouts of eight calls, 29 and 35 s between bouts) 20 and 25 dB over wind at
  // -53 dBFS, half of whose power reaches every mic at once. Before the rule (and the longer
  // static timeout and stream-check evidence of the same change), the wind between bouts gave 19
  // tracks: 31 events, 5 of them 10 deg or more off both choruses, the western chorus 53 %
  // complete on its track, and the scan said the geometry "probably does not describe the array"
  // (33 % of its confident hops). Now: 2 tracks, 25 events, both choruses 100 %, no warning.
  const wav = render(
    dir,
    'common-mode-wind',
    fieldScene({
      durationS: 50,
      seed: 25,
      geometry: 'tetrahedron-10cm',
      sources: [
        { name: 'west', position_m: [-9.31, 4.31, 0.2], signal: tone(736), level: { dbfs_at_array: -33.3 }, calls: { start_s: 5.65, length_s: 0.36, every_s: 1.05, jitter_s: 0.1, per_bout: 8, bout_gap_s: 28.8 } },
        { name: 'south', position_m: [4.95, -13.81, 0.2], signal: tone(1004), level: { dbfs_at_array: -28.7 }, calls: { start_s: 6.75, length_s: 0.32, every_s: 0.79, jitter_s: 0.1, per_bout: 8, bout_gap_s: 35.3 } },
      ],
      noise: { floor_dbfs: -60, wind_dbfs: -53 },
    }),
  );
  const { events, stderr, scores } = scanScored(wav);

  it('every event is a chorus call: no tracks of the wind', () => {
    // azimuth = atan2(x, y) from the array's front (+y), interface.md
    const bearings = [(Math.atan2(-9.31, 4.31) * 180) / Math.PI, (Math.atan2(4.95, -13.81) * 180) / Math.PI];
    for (const e of events) {
      const off = Math.min(...bearings.map((b) => Math.abs(((e.azimuth_deg - b + 540) % 360) - 180)));
      expect(off, `event at ${e.start_s} s, ${e.azimuth_deg} deg`).toBeLessThan(10);
    }
    expect(new Set(events.map((e) => e.track)).size).toBe(2);
    for (const s of scores.sources) expect(s.completeness, s.source).toBeGreaterThanOrEqual(0.9);
  });

  it('the right geometry is not called wrong', () => {
    expect(stderr).not.toMatch(/fit no single direction of this geometry/);
    expect(stderr).not.toMatch(/at or beyond the largest delay/);
  });
});

/**
 * Choruses that pause longer than --track-timeout keep their ids (--static-timeout,
 * src/track/tracker.ts). A scene rendered by bearline's simulator (its delays are checked
 * against sox and numpy, test/sim/), scored against its truth with track purity and
 * completeness as used in multi-target tracking evaluation (common practice).
 */
import { describe, expect, it } from 'vitest';
import { fieldScene, render, scanScored } from './helpers.js';
import { tempDir } from '../helpers/temp-dir.js';

const dir = tempDir('accuracy').dir;

describe('two choruses in bouts with 15-18 s pauses, 44.1 kHz, a 10 cm triangle in wind', () => {
  // A pulsed low chorus to the south-west and a tonal one to the north-east, five and six calls a
  // bout, 18 and 15 s between bouts, 70 s. With only --track-timeout (10 s) every bout came back
  // with a new id: 33 % and 25 % of the calls on each chorus' main track.
  const wav = render(
    dir,
    'chorus-pauses',
    fieldScene({
      rateHz: 44100,
      durationS: 70,
      seed: 83,
      geometry: 'triangle-10cm',
      sources: [
        { name: 'west', position_m: [-7, -4, 0.2], signal: { type: 'tone', f0_hz: 450, harmonics: [1, 0.7, 0.4, 0.2], pulse_rate_hz: 12, pulse_duty: 0.6 }, level: { dbfs_at_array: -31 },
          calls: { start_s: 1, length_s: 0.4, every_s: 1.1, jitter_s: 0.2, per_bout: 5, bout_gap_s: 18 } },
        { name: 'east', position_m: [5, 9, 0.2], signal: { type: 'tone', f0_hz: 1300, harmonics: [1, 0.3] }, level: { dbfs_at_array: -33 },
          calls: { start_s: 8, length_s: 0.2, every_s: 0.7, jitter_s: 0.1, per_bout: 6, bout_gap_s: 15 } },
      ],
      noise: { floor_dbfs: -60, wind_dbfs: -50 },
    }),
  );
  const { scores } = scanScored(wav);

  it('each chorus keeps one id through every pause: at least 90 % of its calls on its main track, no switch', () => {
    for (const s of scores.sources) {
      expect(s.completeness, s.source).toBeGreaterThanOrEqual(0.9);
      expect(s.idSwitches, s.source).toBe(0);
    }
  });

  it('no track holds both choruses', () => {
    for (const t of scores.tracks) if (t.attributed >= 2) expect(t.purity, `track ${t.track}`).toBeGreaterThanOrEqual(0.95);
    const mains = scores.sources.map((s) => s.track);
    expect(new Set(mains).size).toBe(2);
  });
});

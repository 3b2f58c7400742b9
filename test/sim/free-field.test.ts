import { describe, expect, it } from 'vitest';
import { loadArrayRef } from '../../src/geometry/array-presets.js';
import { renderScene } from '../../src/sim/render.js';
import { parseScene } from '../../src/sim/scene.js';
import { dist, micInScene, numpy, sceneFrom, writeF32 } from './helpers.js';
import { tempDir } from '../helpers/temp-dir.js';

const FS = 48000;
const C = 343;
const ARRAY_POS = [2, 3, 1.5];
const HEADING = 30;
const SQUARE = [
  [-0.1, 0.1, 0],
  [0.1, 0.1, 0],
  [0.1, -0.1, 0],
  [-0.1, -0.1, 0],
]; // configs/arrays/square-20cm.json, copied here
const mics = SQUARE.map((p) => micInScene(ARRAY_POS, HEADING, p));
const SOURCE = [4.4, 5.9, 2.6];

function baseScene(source: Record<string, unknown>, extra: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    sample_rate_hz: FS,
    duration_s: 1,
    speed_of_sound_m_s: C,
    array: { geometry: 'square-20cm', position_m: ARRAY_POS, heading_deg: HEADING },
    sources: [{ name: 's', ...source }],
    ...extra,
  };
}

describe('free-field rendering: delays and levels against the geometry', () => {
  it('an impulse arrives at each mic at distance / c (peaks located by numpy, 64x band-limited upsampling): within 1 us', () => {
    const click = new Float32Array(4000);
    click[100] = 1;
    const scene = parseScene(
      baseScene({ position_m: SOURCE, signal: { type: 'wav', file: 'click.wav' }, level: { dbfs_at_array: -20 }, calls: { length_s: 4000 / FS, ramp_s: 0 } }, { duration_s: 0.1 }),
      'test scene',
      { loadArray: (ref, field) => loadArrayRef(ref, '.', field), loadWav: () => ({ sampleRate: FS, samples: click }) },
    );
    const { channels } = renderScene(scene);
    const peaks = numpy(writeF32(tempDir('sim').dir, 'click.f32', channels), 4, FS, 'peak');
    const errs = peaks.map((t, m) => t - (100 / FS + dist(SOURCE, mics[m]!) / C));
    console.log(`impulse arrival errors (us): ${errs.map((e) => (1e6 * e).toFixed(3)).join(', ')}`);
    for (const e of errs) expect(Math.abs(e)).toBeLessThan(1e-6);
  });

  it('broadband noise: TDOAs of every mic against mic 0 (numpy cross-correlation) match (r_m - r_0) / c within 1 us; RMS follows 1 / r and the dBFS-at-array level', () => {
    const scene = sceneFrom(baseScene({ position_m: SOURCE, signal: { type: 'noise', low_hz: 200, high_hz: 18000 }, level: { dbfs_at_array: -20 } }));
    const { channels } = renderScene(scene);
    const file = writeF32(tempDir('sim').dir, 'noise.f32', channels);
    const tdoa = numpy(file, 4, FS, 'tdoa', 2000, 46000);
    const errs = tdoa.map((t, m) => t - (dist(SOURCE, mics[m]!) - dist(SOURCE, mics[0]!)) / C);
    console.log(`noise TDOA errors (us): ${errs.map((e) => (1e6 * e).toFixed(3)).join(', ')}`);
    for (const e of errs) expect(Math.abs(e)).toBeLessThan(1e-6);
    // RMS over the whole second (the source calls throughout; its first ~12 ms are silent).
    const rms = numpy(file, 4, FS, 'rms');
    const rCentre = dist(SOURCE, ARRAY_POS);
    rms.forEach((v, m) => {
      // -20 dBFS at the array centre, scaled by r_centre / r_m; 1.2% allowance for the silent start.
      const expected = 0.1 * (rCentre / dist(SOURCE, mics[m]!));
      expect(Math.abs(v / expected - 1)).toBeLessThan(0.02);
    });
    const spread = rms.map((v, m) => v * dist(SOURCE, mics[m]!));
    expect(Math.max(...spread) / Math.min(...spread) - 1).toBeLessThan(0.003);
  });

  it('dB SPL at 1 m: 80 dB SPL with 100 dB SPL full scale gives RMS 0.1 / r (tone, numpy RMS)', () => {
    const far = [ARRAY_POS[0]! + 7, ARRAY_POS[1]! - 4, ARRAY_POS[2]!];
    const scene = sceneFrom(
      baseScene({ position_m: far, signal: { type: 'tone', f0_hz: 700, harmonics: [1, 0.5] }, level: { db_spl_at_1m: 80 } }, { full_scale_db_spl: 100, duration_s: 2 }),
    );
    const { channels } = renderScene(scene);
    const start = Math.ceil((dist(far, ARRAY_POS) / C) * FS) + 100;
    const rms = numpy(writeF32(tempDir('sim').dir, 'tone.f32', channels.map((c) => c.subarray(start))), 4, FS, 'rms');
    rms.forEach((v, m) => expect(Math.abs(v / (0.1 / dist(far, mics[m]!)) - 1)).toBeLessThan(0.01));
  });

  it('a moving source: TDOA in 20 ms windows (numpy) follows the straight path at 6 m/s within 1 us', () => {
    // Pair 50 cm (configs/arrays/pair-50cm.json): mics at (-0.25, 0, 0) and (0.25, 0, 0); heading 0, so x = east.
    const arrayPos = [0, 0, 1];
    const pair = [
      [-0.25, 0, 1],
      [0.25, 0, 1],
    ];
    const p0 = [-9, 10, 3];
    const v = [6, 0, 0];
    const t1 = 3;
    const scene = sceneFrom({
      sample_rate_hz: FS,
      duration_s: 3,
      speed_of_sound_m_s: C,
      array: { geometry: 'pair-50cm', position_m: arrayPos },
      sources: [
        {
          name: 'bird',
          path: [
            { time_s: 0, position_m: p0 },
            { time_s: t1, position_m: p0.map((x, k) => x + v[k]! * t1) },
          ],
          signal: { type: 'noise', low_hz: 300, high_hz: 16000 },
          level: { dbfs_at_array: -20 },
        },
      ],
    });
    const { channels } = renderScene(scene);
    const file = writeF32(tempDir('sim').dir, 'moving.f32', channels);
    const win = 960;
    const step = 4800;
    const first = 4800;
    const count = 28;
    const tdoas = numpy(file, 2, FS, 'windows', first, win, step, count);
    const errs = tdoas.map((tdoa, j) => {
      const t = (first + j * step + win / 2) / FS;
      // Emission time of the sound reaching the array centre at t: solve te = t - r(te) / c.
      let te = t;
      for (let k = 0; k < 20; k++) te = t - dist(p0.map((x, i) => x + v[i]! * te), arrayPos) / C;
      const p = p0.map((x, i) => x + v[i]! * te);
      return tdoa - (dist(p, pair[1]!) - dist(p, pair[0]!)) / C;
    });
    const span = [tdoas[0]!, tdoas[count - 1]!].map((x) => (1e6 * x).toFixed(0));
    console.log(`moving source: TDOA from ${span[0]} to ${span[1]} us; errors (us): ${errs.map((e) => (1e6 * e).toFixed(3)).join(', ')}`);
    for (const e of errs) expect(Math.abs(e)).toBeLessThan(1e-6);
  });
});

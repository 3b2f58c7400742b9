/**
 * The accuracy report honours the mirror of any axis: a pair along y and a 4-mic line along y
 * hearing sources behind them. Scenes from the project's simulator (free field, exact
 * fractional delays; checked against sox and numpy in test/sim), truth in the array frame of
 * interface.md. Expected: a line resolves only the angle to its axis (common practice, no
 * source), so a source at az reads as its image across the axis, -az for an axis along y, and
 * that counts as right; the scorer used to fold every pair to the front (x axis), which made
 * these hops 60 degrees wrong.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { rmSync } from 'node:fs';
import { accuracyJson, DEG, render, scanFrames, share } from './helpers.js';
import { tempDir } from '../helpers/temp-dir.js';

const dir = tempDir('accuracy').dir;
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function scene(geometry: string, azDeg: number): unknown {
  const r = 30;
  return {
    sample_rate_hz: 48000,
    duration_s: 2,
    seed: 7,
    speed_of_sound_m_s: 343,
    array: { geometry, position_m: [0, 0, 1.5], heading_deg: 0 },
    sources: [{ name: 'noise', position_m: [r * Math.sin(azDeg * DEG), r * Math.cos(azDeg * DEG), 1.5], signal: { type: 'noise', low_hz: 300, high_hz: 8000 }, level: { dbfs_at_array: -20 } }],
    noise: { floor_dbfs: -60 },
  };
}

function arrayFile(name: string, positions: number[][]): string {
  const path = join(dir, `${name}.json`);
  writeFileSync(path, JSON.stringify({ name, mics: positions.map((p, channel) => ({ channel, position_m: p })) }));
  return path;
}

describe('accuracy with mirrors along y (simulator scenes)', () => {
  const cases = [
    { name: 'pair-y', positions: [[0, -0.1, 0], [0, 0.1, 0]], az: -150 },
    { name: 'line4-y', positions: [[0, -0.09, 0], [0, -0.03, 0], [0, 0.03, 0], [0, 0.09, 0]], az: -60 },
  ];
  for (const c of cases) {
    it(`${c.name}, source at ${c.az}: hops read ${-c.az} and the report counts them within 2 deg`, () => {
      const wav = render(dir, `${c.name}${c.az}`, scene(arrayFile(c.name, c.positions), c.az));
      const frames = scanFrames(wav).filter((f) => f.azimuth_deg !== null);
      expect(frames.length).toBeGreaterThan(100);
      const near = frames.filter((f) => Math.abs(f.azimuth_deg! - -c.az) < 2).length / frames.length;
      expect(near).toBeGreaterThan(0.95);
      const report = accuracyJson(wav);
      console.log(`${c.name} at ${c.az}: within 2/5 deg ${share(report, 2).toFixed(3)}/${share(report, 5).toFixed(3)}, median ${report.medianDeg?.toFixed(3)} deg`);
      expect(share(report, 2)).toBeGreaterThan(0.9);
      expect(report.medianDeg!).toBeLessThan(0.5);
    });
  }
});

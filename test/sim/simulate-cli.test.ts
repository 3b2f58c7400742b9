import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { loadGeometryFile } from '../../src/geometry/geometry-file.js';
import { tempDir } from '../helpers/temp-dir.js';

const MAIN = fileURLToPath(new URL('../../dist/cli/main.js', import.meta.url));

function run(args: string[]): { code: number | null; stdout: string; stderr: string } {
  const r = spawnSync('node', [MAIN, ...args], { encoding: 'utf8' });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

/** sox --i reports of a WAV file (sox is an independent reader). */
function soxInfo(file: string): { channels: number; rate: number; samples: number; encoding: string } {
  const info = (flag: string): string => spawnSync('sox', ['--i', flag, file], { encoding: 'utf8' }).stdout.trim();
  return { channels: Number(info('-c')), rate: Number(info('-r')), samples: Number(info('-s')), encoding: info('-e') };
}

interface Truth {
  time_s: number;
  source: string;
  azimuth_deg: number;
  elevation_deg: number;
}

function readTruth(file: string): Truth[] {
  return readFileSync(file, 'utf8')
    .trim()
    .split('\n')
    .map((l) => JSON.parse(l) as Truth);
}

/**
 * Expected azimuth and elevation, from interface.md: azimuth 0 = the array's front, +90 =
 * its right; with the front at compass heading h, a source at compass bearing b has azimuth
 * b - h (wrapped to (-180, 180]); bearing = atan2(east, north).
 */
function expectedDirection(arrayPos: number[], headingDeg: number, src: number[]): { az: number; el: number } {
  const [e, n, u] = [src[0]! - arrayPos[0]!, src[1]! - arrayPos[1]!, src[2]! - arrayPos[2]!];
  const bearing = (Math.atan2(e, n) * 180) / Math.PI;
  let az = bearing - headingDeg;
  while (az <= -180) az += 360;
  while (az > 180) az -= 360;
  return { az, el: (Math.atan2(u, Math.hypot(e, n)) * 180) / Math.PI };
}

const ARRAY_POS = [10, 20, 1.2];
const HEADING = 250;
const FROG = [14, 17, 0.2];
const CRICKET = [7, 24.5, 0.5];

function smallScene(dir: string): string {
  const scene = {
    sample_rate_hz: 16000,
    duration_s: 3,
    seed: 5,
    array: { geometry: 'square-20cm', position_m: ARRAY_POS, heading_deg: HEADING },
    sources: [
      {
        name: 'frog',
        position_m: FROG,
        signal: { type: 'tone', f0_hz: 450, harmonics: [1, 0.4], pulse_rate_hz: 40 },
        level: { dbfs_at_array: -26 },
        calls: { start_s: 0.3, length_s: 0.25, every_s: 0.8 },
      },
      { name: 'cricket', position_m: CRICKET, signal: { type: 'noise', low_hz: 3000, high_hz: 6000 }, level: { db_spl_at_1m: 70 }, calls: { start_s: 1, length_s: 0.1, every_s: 0.4, jitter_s: 0.05 } },
    ],
    noise: { wind_dbfs: -55, floor_dbfs: -85 },
  };
  const file = join(dir, 'pond.scene.json');
  writeFileSync(file, JSON.stringify(scene));
  return file;
}

describe('bearline simulate', () => {
  it('writes REC.wav, REC.truth.jsonl and REC.array.json that agree with the scene', () => {
    const dir = tempDir('sim').dir;
    const scene = smallScene(dir);
    const out = join(dir, 'rec.wav');
    const r = run(['simulate', '--scene', scene, '--out', out]);
    // one line saying what was written (issue 17: simulate used to print nothing on success)
    expect(r.stderr).toMatch(/^bearline: wrote .*\.wav \(.* s, \d+ channels, \d+ Hz.*\), its truth .*\.truth\.jsonl \(\d+ sources?\) and array .*\.array\.json\n$/);
    expect(r.code).toBe(0);
    expect(r.stdout).toBe('');
    expect(soxInfo(out)).toEqual({ channels: 4, rate: 16000, samples: 48000, encoding: 'Signed Integer PCM' });

    const geometry = loadGeometryFile(join(dir, 'rec.array.json'));
    expect(geometry.headingDeg).toBe(HEADING);
    expect(geometry.mics.map((m) => m.position)).toEqual([
      [-0.1, 0.1, 0],
      [0.1, 0.1, 0],
      [0.1, -0.1, 0],
      [-0.1, -0.1, 0],
    ]);

    const truth = readTruth(join(dir, 'rec.truth.jsonl'));
    for (const [name, pos] of [
      ['frog', FROG],
      ['cricket', CRICKET],
    ] as const) {
      const recs = truth.filter((t) => t.source === name);
      expect(recs.length).toBeGreaterThan(10);
      const { az, el } = expectedDirection(ARRAY_POS, HEADING, [...pos]);
      for (const t of recs) {
        expect(Math.abs(t.azimuth_deg - az)).toBeLessThan(0.1);
        expect(Math.abs(t.elevation_deg - el)).toBeLessThan(0.1);
      }
    }
    // Frog calls 0.25 s from 0.3 s, every 0.8 s: heard at the array from 0.3 s + r / c.
    const frog = truth.filter((t) => t.source === 'frog');
    const r0 = Math.hypot(FROG[0]! - ARRAY_POS[0]!, FROG[1]! - ARRAY_POS[1]!, FROG[2]! - ARRAY_POS[2]!);
    expect(frog[0]!.time_s).toBeCloseTo(Math.ceil((0.3 + r0 / 343) * 100) / 100, 6);
    const firstCall = frog.filter((t) => t.time_s < 0.8);
    expect(firstCall.length).toBe(25); // 0.25 s in 10 ms steps
    for (let i = 1; i < firstCall.length; i++) expect(firstCall[i]!.time_s - firstCall[i - 1]!.time_s).toBeCloseTo(0.01, 9);
    // Times ascend through the file.
    for (let i = 1; i < truth.length; i++) expect(truth[i]!.time_s).toBeGreaterThanOrEqual(truth[i - 1]!.time_s);
  });

  it('--float writes 32-bit float samples; the same seed gives the same samples', () => {
    const dir = tempDir('sim').dir;
    const scene = smallScene(dir);
    expect(run(['simulate', '--scene', scene, '--out', join(dir, 'a.wav'), '--float']).code).toBe(0);
    expect(run(['simulate', '--scene', scene, '--out', join(dir, 'b.wav'), '--float']).code).toBe(0);
    expect(soxInfo(join(dir, 'a.wav')).encoding).toBe('Floating Point PCM');
    expect(readFileSync(join(dir, 'a.wav')).equals(readFileSync(join(dir, 'b.wav')))).toBe(true);
  });

  it('bad input: one line on stderr, exit 2, and nothing already written is touched', () => {
    const dir = tempDir('sim').dir;
    const out = join(dir, 'rec.wav');
    writeFileSync(out, 'earlier recording');
    const bad = join(dir, 'bad.json');
    writeFileSync(bad, JSON.stringify({ sample_rate_hz: 16000, duration_s: 1, array: { geometry: 'square-20cm', position_m: [0, 0, 1] }, sources: [] }));
    const cases: [string[], RegExp][] = [
      [['simulate', '--scene', bad, '--out', out], /sources must hold at least one source/],
      [['simulate', '--scene', join(dir, 'nope.json'), '--out', out], /scene file .*nope\.json does not exist/],
      [['simulate', '--scene', smallScene(dir), '--out', join(dir, 'missing', 'rec.wav')], /output directory .*missing does not exist/],
      [['simulate', '--scene', smallScene(dir), '--out', join(dir, 'rec.flac')], /must name a \.wav file/],
      // REC.array.json would be the scene file itself.
      [['simulate', '--scene', join(dir, 'pond.array.json'), '--out', join(dir, 'pond.wav')], /would overwrite the input/],
    ];
    writeFileSync(join(dir, 'pond.array.json'), readFileSync(smallScene(dir)));
    for (const [args, message] of cases) {
      const r = run(args);
      expect(r.code).toBe(2);
      expect(r.stderr).toMatch(message);
      expect(r.stderr.trim().split('\n')).toHaveLength(1);
      expect(r.stderr).not.toMatch(/\n\s+at /);
    }
    expect(readFileSync(out, 'utf8')).toBe('earlier recording');
    expect(existsSync(join(dir, 'rec.truth.jsonl'))).toBe(false);
    expect(existsSync(join(dir, 'pond.wav'))).toBe(false);
  });

  it('without --scene renders the built-in wetland demo: frogs at their bearings, a bird crossing in front', () => {
    const dir = tempDir('sim').dir;
    mkdirSync(join(dir, 'demo'));
    const out = join(dir, 'demo', 'dusk.wav');
    const r = run(['simulate', '--out', out]);
    expect(r.code).toBe(0);
    expect(soxInfo(out)).toEqual({ channels: 4, rate: 48000, samples: 48000 * 60, encoding: 'Signed Integer PCM' });
    const demo = JSON.parse(readFileSync(fileURLToPath(new URL('../../configs/scenes/wetland-dusk.json', import.meta.url)), 'utf8')) as {
      array: { position_m: number[]; heading_deg: number };
      sources: { name: string; position_m?: number[] }[];
    };
    const truth = readTruth(join(dir, 'demo', 'dusk.truth.jsonl'));
    for (const s of demo.sources.filter((x) => x.position_m)) {
      const { az } = expectedDirection(demo.array.position_m, demo.array.heading_deg, s.position_m!);
      const recs = truth.filter((t) => t.source === s.name);
      expect(recs.length).toBeGreaterThan(100);
      for (const t of recs) expect(Math.abs(t.azimuth_deg - az)).toBeLessThan(0.1);
    }
    const bird = truth.filter((t) => t.source === 'passing-bird');
    expect(bird.length).toBeGreaterThan(50);
    // Flying west to east north of a station that faces 30 degrees: azimuth sweeps from left (about -100) to right (about +50).
    expect(bird[0]!.azimuth_deg).toBeLessThan(-80);
    expect(bird[bird.length - 1]!.azimuth_deg).toBeGreaterThan(30);
  });
});

import { execFileSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { runBenchCheck, type TakeAudio } from '../../src/bench-check/bench-check.js';
import type { BenchFit } from '../../src/bench-check/array-fit.js';
import { resolveBenchCheckOptions, type BenchCheckOptions } from '../../src/bench-check/options.js';
import type { ArrayGeometry } from '../../src/geometry/array-geometry.js';
import { readWavFile } from '../../src/sources/wav-reader.js';

/** A 10 cm square (mics at the corners, x right, y front), as positions and as a geometry. */
export const SQUARE: number[][] = [
  [-0.05, 0.05, 0],
  [0.05, 0.05, 0],
  [0.05, -0.05, 0],
  [-0.05, -0.05, 0],
];
export const square: ArrayGeometry = { name: 'square-10cm', headingDeg: null, mics: SQUARE.map((p, i) => ({ channel: i, position: [p[0]!, p[1]!, p[2]!] as const })) };
/** Takes from eight directions around the array. */
export const AROUND = [0, 45, 90, 135, 180, -135, -90, -45].map((az) => ({ az }));

const HERE = fileURLToPath(new URL('.', import.meta.url));

export function python(script: string, args: string[]): string {
  try {
    return execFileSync('python3', [join(HERE, script), ...args], { encoding: 'utf8', maxBuffer: 1 << 26, stdio: ['ignore', 'pipe', 'pipe'] });
  } catch (err) {
    const e = err as NodeJS.ErrnoException & { stderr?: string };
    if (e.code === 'ENOENT') throw new Error('python3 is not installed: the bench-check tests need python3 with numpy');
    throw new Error(`python3 ${script} failed: ${e.stderr ?? e.message}`);
  }
}

export interface NumpyTakeSpec {
  rate: number;
  duration_s: number;
  positions_m: number[][];
  skew_s?: number[];
  gain_db?: number[];
  polarity?: number[];
  order?: number[];
  snr_db?: number;
  seed?: number;
}

export interface MadeTake {
  az: number;
  el: number | null;
  path: string;
}

/** Takes made by numpy (make_takes.py), one WAV per direction. */
export function numpyTakes(dir: string, name: string, spec: NumpyTakeSpec, directions: { az: number; el?: number }[]): MadeTake[] {
  const takes = directions.map((d) => ({ az: d.az, el: d.el ?? null, path: join(dir, `${name}-az${d.az}${d.el !== undefined ? `-el${d.el}` : ''}.wav`) }));
  const specPath = join(dir, `${name}.spec.json`);
  writeFileSync(specPath, JSON.stringify({ ...spec, takes: takes.map((t) => ({ az: t.az, el: t.el ?? 0, out: t.path })) }));
  python('make_takes.py', [specPath]);
  return takes;
}

export function audioTakes(takes: readonly MadeTake[]): { rate: number; takes: TakeAudio[] } {
  let rate = 0;
  const out = takes.map((t) => {
    const w = readWavFile(t.path);
    rate = w.sampleRate;
    return { label: t.path, azimuthDeg: t.az, elevationDeg: t.el, recording: t.path, channels: w.channels, start: 0, end: w.channels[0]!.length };
  });
  return { rate, takes: out };
}

export function fitTakes(geometry: ArrayGeometry, takes: readonly MadeTake[], opts: Partial<BenchCheckOptions> = {}, c = 343): BenchFit {
  const a = audioTakes(takes);
  return runBenchCheck(geometry, c, a.rate, a.takes, resolveBenchCheckOptions(opts));
}

/** Take arguments for the command line: AZ=PATH or AZ,EL=PATH. */
export function takeArgs(takes: readonly MadeTake[]): string[] {
  return takes.map((t) => (t.el === null ? `${t.az}=${t.path}` : `${t.az},${t.el}=${t.path}`));
}

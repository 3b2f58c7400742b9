import { execFileSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { ArrayGeometry } from '../../src/geometry/array-geometry.js';
import { loadArrayRef } from '../../src/geometry/array-presets.js';
import { parseScene, type Scene } from '../../src/sim/scene.js';

export const SCRIPT = fileURLToPath(new URL('./numpy_delays.py', import.meta.url));

/** Interleaved float32 file of planar channels, for numpy. */
export function writeF32(dir: string, name: string, channels: readonly (Float32Array | Float64Array)[]): string {
  const n = channels[0]!.length;
  const buf = Buffer.alloc(n * channels.length * 4);
  let o = 0;
  for (let i = 0; i < n; i++) for (const ch of channels) buf.writeFloatLE(ch[i]!, (o++) * 4);
  const path = join(dir, name);
  writeFileSync(path, buf);
  return path;
}

/** Run the numpy measurement script (test/sim/numpy_delays.py). */
export function numpy(file: string, channels: number, rate: number, mode: string, ...args: (string | number)[]): number[] {
  const out = execFileSync('python3', [SCRIPT, file, String(channels), String(rate), mode, ...args.map(String)], { encoding: 'utf8' });
  return JSON.parse(out) as number[];
}

/** Parse a scene object with presets from configs/arrays and no WAV signals. */
export function sceneFrom(json: unknown): Scene {
  return parseScene(json, 'test scene', {
    loadArray: (ref: string, field: string): ArrayGeometry => loadArrayRef(ref, '.', field),
    loadWav: () => {
      throw new Error('no WAV signals in this test');
    },
  });
}

/**
 * Scene position of a mic, written out here from the scene format's definition (heading h
 * clockwise from north; array right = (cos h, -sin h), front = (sin h, cos h) in east/north),
 * independent of the simulator's own conversion.
 */
export function micInScene(arrayPos: readonly number[], headingDeg: number, local: readonly number[]): number[] {
  const h = (headingDeg * Math.PI) / 180;
  const [x, y, z] = local as [number, number, number];
  return [arrayPos[0]! + x * Math.cos(h) + y * Math.sin(h), arrayPos[1]! - x * Math.sin(h) + y * Math.cos(h), arrayPos[2]! + z];
}

export function dist(a: readonly number[], b: readonly number[]): number {
  return Math.hypot(a[0]! - b[0]!, a[1]! - b[1]!, a[2]! - b[2]!);
}

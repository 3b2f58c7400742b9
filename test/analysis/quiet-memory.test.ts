/**
 * A call that starts just after another caller's ended, from another direction, is read in its
 * own direction (issue 13: the evidence memory carried the first caller's direction into the
 * second's call, with full confidence). Signals made by sox (an independent tool): a broadband
 * call from 170 deg, then 150 ms of quiet, then a two-tone call from -130 deg, on a 20 cm
 * square, far-field delays of interface.md by the 10x-rate method of references.md, over
 * independent noise per mic.
 */
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analyzeArrays, createAnalysis } from '../../src/analysis/analysis.js';
import type { AnalysisOptions } from '../../src/analysis/analysis-options.js';
import { loadGeometryFile } from '../../src/geometry/geometry-file.js';
import { unitFromAzEl } from '../../src/geometry/vec3.js';
import { angleDiffDeg } from '../../src/track/circular.js';
import { farFieldDelaysUp, soxDecode, soxDelayedSignal, soxIndependentNoise, soxMix } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

const square = loadGeometryFile(fileURLToPath(new URL('../../configs/arrays/square-20cm.json', import.meta.url)));
const tmp = tempDir();
afterAll(() => tmp.cleanup());

const FIRST_AZ = 170;
const SECOND_AZ = -130;
/** The second call sounds from 0.95 to 1.35 s; its hops are read from 1.0 s (a hop's frame must hold it). */
const SECOND = [1.0, 1.33] as const;

let mix: { rate: number; channels: Float32Array[] };
beforeAll(() => {
  const positions = square.mics.map((m) => m.position);
  const delays = (az: number) => farFieldDelaysUp(positions, unitFromAzEl(az, 0), 343, 480000);
  const first = soxDelayedSignal({ out: `${tmp.dir}/first.wav`, delaysUp: delays(FIRST_AZ), durationS: 0.5, effects: ['sinc', '500-8000', 'pad', '0.3', '1.0'], gainDb: -12 }, tmp.dir);
  const second = soxDelayedSignal({ out: `${tmp.dir}/second.wav`, delaysUp: delays(SECOND_AZ), durationS: 0.4, synth: ['sine', '450', 'sine', '900'], effects: ['remix', '-', 'pad', '0.95', '0.45'], gainDb: -12 }, tmp.dir);
  const noise = soxIndependentNoise(`${tmp.dir}/noise.wav`, positions.length, 1.8, -60, tmp.dir);
  mix = soxDecode(soxMix(`${tmp.dir}/mix.wav`, [first, second, noise].map((path) => ({ path, volume: 1 }))));
});

/** The second call's hops: how many give a direction, and how many of those lie near each caller. */
function secondCall(options: AnalysisOptions): { hops: number; valid: number; own: number; first: number } {
  const setup = createAnalysis(square, mix.rate, 343, options);
  const out = { hops: 0, valid: 0, own: 0, first: 0 };
  analyzeArrays(setup, mix.channels, (r) => {
    if (r.timeS < SECOND[0] || r.timeS > SECOND[1]) return;
    out.hops++;
    if (!r.valid) return;
    out.valid++;
    const az = r.sources[0]!.azimuthDeg;
    if (Math.abs(angleDiffDeg(az, SECOND_AZ)) <= 8) out.own++;
    if (Math.abs(angleDiffDeg(az, FIRST_AZ)) <= 8) out.first++;
  });
  return out;
}

describe('a call right after another caller is read in its own direction', () => {
  it('defaults: the second call is found on most of its hops, in its own direction, and never in the first caller\'s', () => {
    const r = secondCall({});
    console.log(`defaults: ${r.valid} of ${r.hops} hops with a direction, ${r.own} within 8 deg of the caller, ${r.first} within 8 deg of the caller before`);
    expect(r.valid / r.hops).toBeGreaterThanOrEqual(0.8);
    expect(r.own / r.valid).toBeGreaterThanOrEqual(0.9);
    expect(r.first).toBe(0);
  });

  it('the scene is a hard one: with the memory alone (--quiet-memory equal to --memory) hops of the second call read the first caller\'s direction', () => {
    const r = secondCall({ quietMemoryS: 0.15 });
    console.log(`memory alone: ${r.valid} of ${r.hops} hops with a direction, ${r.own} within 8 deg of the caller, ${r.first} within 8 deg of the caller before`);
    expect(r.first).toBeGreaterThan(0);
  });
});

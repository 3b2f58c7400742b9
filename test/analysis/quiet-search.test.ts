/**
 * --quiet-search-every (the station-low-cpu profile's 8): quiet hops after a hop where nothing
 * sounded skip the direction stages, except every n-th; calls are read as with every hop
 * searched, and a steady source is still found. Signals made by sox (an independent tool):
 * two broadband calls (60 deg, then -100 deg) with quiet between, and a steady noise source
 * from 30 deg that sounds from the first sample, on a 20 cm square, far-field delays of
 * interface.md by the 10x-rate method of references.md, over independent noise per mic.
 */
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analyzeArrays, createAnalysis } from '../../src/analysis/analysis.js';
import type { HopResult } from '../../src/analysis/hop-analyzer.js';
import { loadGeometryFile } from '../../src/geometry/geometry-file.js';
import { unitFromAzEl } from '../../src/geometry/vec3.js';
import { angleDiffDeg } from '../../src/track/circular.js';
import { farFieldDelaysUp, soxDecode, soxDelayedSignal, soxIndependentNoise, soxMix } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

const square = loadGeometryFile(fileURLToPath(new URL('../../configs/arrays/square-20cm.json', import.meta.url)));
const tmp = tempDir();
afterAll(() => tmp.cleanup());

type Mix = { rate: number; channels: Float32Array[] };
let calls: Mix;
let steady: Mix;
beforeAll(() => {
  const positions = square.mics.map((m) => m.position);
  const delays = (az: number) => farFieldDelaysUp(positions, unitFromAzEl(az, 0), 343, 480000);
  // calls: 0.5-0.8 s from 60 deg, 1.6-1.9 s from -100 deg, 2.5 s in all
  const first = soxDelayedSignal({ out: `${tmp.dir}/first.wav`, delaysUp: delays(60), durationS: 0.3, effects: ['sinc', '500-6000', 'pad', '0.5', '1.7'], gainDb: -12 }, tmp.dir);
  const second = soxDelayedSignal({ out: `${tmp.dir}/second.wav`, delaysUp: delays(-100), durationS: 0.3, effects: ['sinc', '500-6000', 'pad', '1.6', '0.6'], gainDb: -12 }, tmp.dir);
  const noise = soxIndependentNoise(`${tmp.dir}/noise.wav`, positions.length, 2.5, -60, tmp.dir);
  calls = soxDecode(soxMix(`${tmp.dir}/calls.wav`, [first, second, noise].map((path) => ({ path, volume: 1 }))));
  const hum = soxDelayedSignal({ out: `${tmp.dir}/hum.wav`, delaysUp: delays(30), durationS: 3, effects: ['sinc', '300-4000'], gainDb: -20 }, tmp.dir);
  const noise2 = soxIndependentNoise(`${tmp.dir}/noise2.wav`, positions.length, 3, -60, tmp.dir);
  steady = soxDecode(soxMix(`${tmp.dir}/steady.wav`, [hum, noise2].map((path) => ({ path, volume: 1 }))));
});

interface Hop {
  timeS: number;
  valid: boolean;
  az: number;
  searched: boolean;
}

function hops(mix: Mix, quietSearchEvery: number): Hop[] {
  const setup = createAnalysis(square, mix.rate, 343, { quietSearchEvery });
  const out: Hop[] = [];
  let searched = 0;
  analyzeArrays(setup, mix.channels, (r: HopResult) => {
    out.push({ timeS: r.timeS, valid: r.valid, az: r.sources[0]!.azimuthDeg, searched: setup.analyzer.searchedHops > searched });
    searched = setup.analyzer.searchedHops;
  });
  return out;
}

describe('--quiet-search-every: quiet hops searched only every n-th while nothing sounds', () => {
  it('two calls with quiet between: the same hops give the same directions as with every hop searched', () => {
    const all = hops(calls, 1);
    const few = hops(calls, 8);
    expect(few.length).toBe(all.length);
    let validAll = 0;
    let validBoth = 0;
    let maxDiff = 0;
    for (let i = 0; i < all.length; i++) {
      if (all[i]!.valid) validAll++;
      if (all[i]!.valid && few[i]!.valid) {
        validBoth++;
        maxDiff = Math.max(maxDiff, Math.abs(angleDiffDeg(all[i]!.az, few[i]!.az)));
      }
    }
    const inCall = (h: Hop) => (h.timeS > 0.55 && h.timeS < 0.75) || (h.timeS > 1.65 && h.timeS < 1.85);
    const own = few.filter((h) => h.valid && inCall(h) && Math.abs(angleDiffDeg(h.az, h.timeS < 1.2 ? 60 : -100)) <= 5).length;
    const callHops = few.filter(inCall).length;
    console.log(`calls: ${validAll} hops with a direction with every hop searched, ${validBoth} of them also with every 8th (largest difference ${maxDiff.toFixed(3)} deg); ${own} of ${callHops} calling hops within 5 deg`);
    expect(validBoth).toBeGreaterThanOrEqual(validAll - 1);
    expect(maxDiff).toBeLessThan(1);
    expect(own / callHops).toBeGreaterThanOrEqual(0.9);
  });

  it('skips the direction search on most hops of a quiet stretch (and searches them all with 1)', () => {
    const quiet = (h: Hop) => h.timeS > 1.0 && h.timeS < 1.5;
    const all = hops(calls, 1).filter(quiet);
    const few = hops(calls, 8).filter(quiet);
    const searchedAll = all.filter((h) => h.searched).length;
    const searchedFew = few.filter((h) => h.searched).length;
    console.log(`quiet 1.0-1.5 s: ${searchedAll} of ${all.length} hops searched with every hop, ${searchedFew} with every 8th`);
    expect(searchedAll).toBe(all.length);
    expect(searchedFew).toBeLessThanOrEqual(Math.ceil(few.length / 8) + 1);
    expect(searchedFew).toBeGreaterThanOrEqual(Math.floor(few.length / 8));
  });

  it('a steady source that sounds from the first sample is found within 8 hops of when every hop searched finds it', () => {
    const all = hops(steady, 1);
    const few = hops(steady, 8);
    const firstValid = (hs: Hop[]) => hs.findIndex((h) => h.valid && Math.abs(angleDiffDeg(h.az, 30)) <= 5);
    const late = (hs: Hop[]) => hs.filter((h) => h.timeS > 1.5);
    const share = (hs: Hop[]) => late(hs).filter((h) => h.valid && Math.abs(angleDiffDeg(h.az, 30)) <= 5).length / late(hs).length;
    console.log(`steady source: first hop within 5 deg ${firstValid(all)} (every hop) and ${firstValid(few)} (every 8th); after 1.5 s ${(100 * share(all)).toFixed(0)} % and ${(100 * share(few)).toFixed(0)} % of hops within 5 deg`);
    expect(firstValid(all)).toBeGreaterThanOrEqual(0);
    expect(firstValid(few)).toBeGreaterThanOrEqual(0);
    expect(firstValid(few) - firstValid(all)).toBeLessThanOrEqual(8);
    expect(share(few)).toBeGreaterThanOrEqual(share(all) - 0.05);
  });
});

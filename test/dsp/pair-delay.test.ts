import { afterAll, describe, expect, it } from 'vitest';
import { pairAzimuthDeg, pairTdoaS } from '../../src/direction/pair-direction.js';
import { pairGeometry } from '../../src/geometry/array-geometry.js';
import { analyzeArrays, createAnalysis } from '../../src/analysis/analysis.js';
import { soxDecode, soxDelayedSignal } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

const tmp = tempDir();
afterAll(() => tmp.cleanup());

const C = 343;
const D = 0.2;
const RATE = 48000;
const UP = 10;

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)]!;
}

function scanPair(path: string, opts = {}) {
  const { rate, channels } = soxDecode(path);
  const setup = createAnalysis(pairGeometry(D), rate, C, opts);
  const tdoas: number[] = [];
  const azimuths: number[] = [];
  analyzeArrays(setup, channels, (r) => {
    if (r.valid) {
      tdoas.push(r.tdoaS[0]!);
      azimuths.push(r.sources[0]!.azimuthDeg);
    }
  });
  return { tdoas, azimuths };
}

describe('pair delays made by sox (fractional delays: 10x rate, whole-sample delay, resample; references.md)', () => {
  // Delay of channel 1 after channel 0 in samples at 480 kHz (2.083 us each): both signs,
  // sub-sample values at 48 kHz, up to near endfire of a 0.2 m pair (583 us).
  const cases = [0, 7, -7, 59, -59, 123, -181, 250, -270];
  for (const d of cases) {
    it(`tdoa ${((d / (RATE * UP)) * 1e6).toFixed(2)} us recovered within 2 us, azimuth = -asin(c tdoa / D)`, () => {
      const path = soxDelayedSignal({ out: `${tmp.dir}/d${d}.wav`, delaysUp: d >= 0 ? [0, d] : [-d, 0], durationS: 1.5 }, tmp.dir);
      const { tdoas, azimuths } = scanPair(path);
      const truth = d / (RATE * UP);
      expect(tdoas.length).toBeGreaterThan(50);
      const m = median(tdoas);
      expect(Math.abs(m - truth)).toBeLessThan(2e-6);
      // 90% of hops within 2 us as well, not just the median
      const within = tdoas.filter((t) => Math.abs(t - truth) < 2e-6).length / tdoas.length;
      expect(within).toBeGreaterThan(0.9);
      expect(median(azimuths)).toBeCloseTo(pairAzimuthDeg(m, D, C), 2);
      expect(Math.abs(median(azimuths) - pairAzimuthDeg(truth, D, C))).toBeLessThan(1);
    });
  }
});

describe('far-field pair geometry (common practice, no source)', () => {
  it('endfire gives the largest delay D / c, broadside zero', () => {
    expect(pairTdoaS(90, D, C)).toBeCloseTo(-D / C, 12);
    expect(pairTdoaS(-90, D, C)).toBeCloseTo(D / C, 12);
    expect(pairTdoaS(0, D, C)).toBeCloseTo(0, 12);
    expect(pairAzimuthDeg(-D / C, D, C)).toBeCloseTo(90, 5);
    expect(pairAzimuthDeg(0, D, C)).toBeCloseTo(0, 9);
  });
  it('a source to the right (+x) reaches channel 1 first: negative tdoa (interface.md)', () => {
    // tdoa = (p_a - p_b) . u / c with p_0 = (-D/2, 0, 0), p_1 = (D/2, 0, 0), u = (1, 0, 0)
    expect(pairTdoaS(90, D, C)).toBeCloseTo(((-D / 2 - D / 2) * 1) / C, 12);
  });
});

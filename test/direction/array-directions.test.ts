import { afterAll, describe, expect, it } from 'vitest';
import { pairGeometry } from '../../src/geometry/array-geometry.js';
import { loadGeometryFile } from '../../src/geometry/geometry-file.js';
import { unitFromAzEl, wrapDeg } from '../../src/geometry/vec3.js';
import { analyzeArrays, createAnalysis } from '../../src/analysis/analysis.js';
import { farFieldDelaysUp, soxDecode, soxDelayedSignal } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

// Multichannel fractional delays made by sox, independently of the project (10x rate, whole
// sample delays per channel, resample; ../shared/references.md). Arrival times from the
// far-field model of interface.md.
const tmp = tempDir();
afterAll(() => tmp.cleanup());
const C = 343;
const UP = 480000;

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)]!;
}

function scanDirection(preset: string, azDeg: number, elDeg: number) {
  const g = loadGeometryFile(`configs/arrays/${preset}.json`);
  const delays = farFieldDelaysUp(g.mics.map((m) => m.position), unitFromAzEl(azDeg, elDeg), C, UP);
  const path = soxDelayedSignal({ out: `${tmp.dir}/${preset}-${azDeg}-${elDeg}.wav`, delaysUp: delays, durationS: 0.4, effects: ['sinc', '200-8000'] }, tmp.dir);
  const { rate, channels } = soxDecode(path);
  const setup = createAnalysis(g, rate, C, {});
  const az: number[] = [];
  const el: number[] = [];
  analyzeArrays(setup, channels, (r) => {
    if (!r.valid) return;
    az.push(wrapDeg(r.sources[0]!.azimuthDeg - azDeg));
    el.push(r.sources[0]!.elevationDeg ?? NaN);
  });
  return { azErr: median(az), el: median(el), hops: az.length };
}

describe('full-circle azimuth from 3- and 4-mic arrays (sox-made delays)', () => {
  for (const preset of ['square-10cm', 'triangle-10cm', 'tetrahedron-10cm']) {
    it(`${preset}: azimuth within 2 degrees every 15 degrees around the circle`, () => {
      const errors: number[] = [];
      for (let az = -180 + 15; az <= 180; az += 15) {
        const r = scanDirection(preset, az, 0);
        expect(r.hops, `hops at ${az}`).toBeGreaterThan(10);
        errors.push(Math.abs(r.azErr));
      }
      expect(Math.max(...errors)).toBeLessThan(2);
    });
  }

  it('tetrahedron-10cm: elevation within 3 degrees', () => {
    for (const [az, el] of [[30, 40], [-120, -25], [170, 10], [-60, 70]] as const) {
      const r = scanDirection('tetrahedron-10cm', az, el);
      expect(Math.abs(r.azErr), `azimuth at ${az},${el}`).toBeLessThan(2);
      expect(Math.abs(r.el - el), `elevation at ${az},${el}`).toBeLessThan(3);
    }
  });
});

describe('lagsOf: the lags a direction gives each pair (used to look for a followed caller, src/analysis/watched-directions.ts)', () => {
  it('match the delays measured on sox-made signals (tetrahedron-10cm, three directions)', () => {
    for (const [az, el] of [[30, 40], [-120, -25], [170, 10]] as const) {
      const g = loadGeometryFile('configs/arrays/tetrahedron-10cm.json');
      const delays = farFieldDelaysUp(g.mics.map((m) => m.position), unitFromAzEl(az, el), C, UP);
      const path = soxDelayedSignal({ out: `${tmp.dir}/lags-${az}-${el}.wav`, delaysUp: delays, durationS: 0.4, effects: ['sinc', '200-8000'] }, tmp.dir);
      const { rate, channels } = soxDecode(path);
      const setup = createAnalysis(g, rate, C, {});
      const P = setup.model.pairs.length;
      const measured: number[][] = Array.from({ length: P }, () => []);
      analyzeArrays(setup, channels, (r) => {
        if (r.valid) for (let p = 0; p < P; p++) measured[p]!.push(r.tdoaS[p]! * rate);
      });
      const expected = new Float64Array(P);
      setup.model.lagsOf(az, el, expected);
      for (let p = 0; p < P; p++) expect(Math.abs(median(measured[p]!) - expected[p]!), `pair ${p} at ${az},${el}`).toBeLessThan(0.2);
    }
  });

  it('the pair of interface.md: tdoa = (p_0 - p_1) . u / c, so a source at +90 deg (on the +x side) gives -D / c', () => {
    const setup = createAnalysis(pairGeometry(0.2), 48000, C, {});
    const out = new Float64Array(1);
    setup.model.lagsOf(90, 0, out);
    expect(out[0]).toBeCloseTo((-0.2 / C) * 48000, 9);
    setup.model.lagsOf(-30, 0, out);
    expect(out[0]).toBeCloseTo((0.2 * 0.5 / C) * 48000, 9);
  });
});

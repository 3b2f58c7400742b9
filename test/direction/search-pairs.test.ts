import { afterAll, describe, expect, it } from 'vitest';
import { analyzeArrays, createAnalysis } from '../../src/analysis/analysis.js';
import { longestPairs } from '../../src/direction/srp-search.js';
import { micPairs } from '../../src/geometry/array-geometry.js';
import { loadGeometryFile } from '../../src/geometry/geometry-file.js';
import { sub, unitFromAzEl, wrapDeg } from '../../src/geometry/vec3.js';
import { farFieldDelaysUp, soxDecode, soxDelayedSignal } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

/**
 * --search-pairs: the direction search of a large array reads the correlation curves of its
 * longest baselines only (fewer inverse FFTs per hop); the band fusion and the refinement still
 * use every pair. Checked on the 8-mic circle of radius 5 cm: its chords between mics m places
 * apart are 2 r sin(pi m / 8) long (plane geometry, common practice, no source), so the 12
 * longest are the 4 diameters (m = 4) and the 8 chords with m = 3; directions from sox-made
 * fractional delays (10x rate, whole-sample delays, resample: ../shared/references.md).
 */
const tmp = tempDir();
afterAll(() => tmp.cleanup());
const C = 343;
const circle8 = () => loadGeometryFile('configs/arrays/circle8-r5cm.json');

describe('the pairs the direction search reads', () => {
  it('the 8-mic circle: the 4 diameters and the 8 chords three mics apart (12 of 28); up to 6 mics: every pair', () => {
    const g = circle8();
    const pairs = micPairs(g);
    const baselines = pairs.map(([a, b]) => sub(g.mics[a]!.position, g.mics[b]!.position));
    const picked = Array.from(longestPairs(baselines, 15));
    expect(picked.length).toBe(12);
    for (const p of picked) {
      const [a, b] = pairs[p]!;
      expect([3, 4, 5]).toContain(b - a);
    }
    // Whole groups of equal chords: 8 asks for the 4 diameters only (the 8 chords m = 3 do not fit).
    expect(Array.from(longestPairs(baselines, 8)).map((p) => pairs[p]![1] - pairs[p]![0])).toEqual([4, 4, 4, 4]);
    expect(longestPairs(baselines, 0).length).toBe(28);
    const six = loadGeometryFile('configs/arrays/circle6-r5cm.json');
    const sixBaselines = micPairs(six).map(([a, b]) => sub(six.mics[a]!.position, six.mics[b]!.position));
    expect(longestPairs(sixBaselines, 15).length).toBe(15);
    // The longest group whole even when it alone holds more: a circle of 6's 3 diameters for 2; the
    // 4 diameters of the circle of 8 for 3.
    expect(Array.from(longestPairs(sixBaselines, 2)).map((p) => micPairs(six)[p]![1] - micPairs(six)[p]![0])).toEqual([3, 3, 3]);
    expect(longestPairs(baselines, 3).length).toBe(4);
    // A tetrahedron's 6 edges are equally long: all 6, whatever the count.
    const tet = loadGeometryFile('configs/arrays/tetrahedron-10cm.json');
    expect(longestPairs(micPairs(tet).map(([a, b]) => sub(tet.mics[a]!.position, tet.mics[b]!.position)), 2).length).toBe(6);
    expect(createAnalysis(g, 48000, C, {}).model.curvePairs.length).toBe(12);
  });

  it('the 8-mic circle finds the same directions with 12 search pairs as with all 28 (within 0.2 degree), within 2 degrees of the truth', () => {
    const g = circle8();
    for (let az = -150; az <= 180; az += 30) {
      const delays = farFieldDelaysUp(g.mics.map((m) => m.position), unitFromAzEl(az, 0), C, 480000);
      const path = soxDelayedSignal({ out: `${tmp.dir}/c8-${az}.wav`, delaysUp: delays, durationS: 0.4, effects: ['sinc', '200-8000'] }, tmp.dir);
      const { rate, channels } = soxDecode(path);
      const azimuths = (searchPairs: number) => {
        const out: number[] = [];
        analyzeArrays(createAnalysis(g, rate, C, { searchPairs }), channels, (r) => out.push(r.valid ? r.sources[0]!.azimuthDeg : NaN));
        return out;
      };
      const some = azimuths(15);
      const all = azimuths(0);
      const valid = some.filter((x, i) => Number.isFinite(x) && Number.isFinite(all[i]!));
      expect(valid.length, `hops at ${az}`).toBeGreaterThan(10);
      some.forEach((x, i) => {
        if (!Number.isFinite(x) || !Number.isFinite(all[i]!)) return;
        expect(Math.abs(wrapDeg(x - all[i]!)), `hop ${i} at ${az}`).toBeLessThan(0.2);
        expect(Math.abs(wrapDeg(x - az)), `hop ${i} at ${az}`).toBeLessThan(2);
      });
    }
  });

  it('the evidence maps still see every pair: lastCorrelations() gives all 28 curves, equal to those of a search over all pairs', () => {
    const g = circle8();
    const delays = farFieldDelaysUp(g.mics.map((m) => m.position), unitFromAzEl(40, 0), C, 480000);
    const { rate, channels } = soxDecode(soxDelayedSignal({ out: `${tmp.dir}/c8-maps.wav`, delaysUp: delays, durationS: 0.3 }, tmp.dir));
    const some = createAnalysis(g, rate, C, {});
    const all = createAnalysis(g, rate, C, { searchPairs: 0 });
    const seen: number[][] = [];
    analyzeArrays(some, channels, () => {
      const curves = some.analyzer.lastCorrelations();
      if (curves) seen.push(curves.flatMap((pc) => Array.from(pc.gcc.subarray(0, pc.maxLag + 1))));
    });
    const want: number[][] = [];
    analyzeArrays(all, channels, () => {
      const curves = all.analyzer.lastCorrelations();
      if (curves) want.push(curves.flatMap((pc) => Array.from(pc.gcc.subarray(0, pc.maxLag + 1))));
    });
    expect(seen.length).toBeGreaterThan(5);
    expect(seen).toEqual(want);
    expect(seen[seen.length - 1]!.every(Number.isFinite)).toBe(true);
  });
});

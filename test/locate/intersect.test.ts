import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { ellipseScale, errorEllipse } from '../../src/locate/ellipse.js';
import { type Arrival, type BearingLine, fixPosition } from '../../src/locate/intersect.js';
import { SETTINGS, bearingTo, gaussian, line, seeded } from './helpers.js';

const DEG = Math.PI / 180;

// Law of sines (plane trigonometry): in triangle ABC with baseline c = |AB| and interior
// angles alpha at A and beta at B, |AC| = c sin(beta) / sin(alpha + beta).
describe('two bearing lines against the law of sines', () => {
  it.each([
    [800, 50, 70],
    [250, 20, 35],
    [1500, 80, 85],
    [600, 30, 120],
  ])('baseline %d m, angles %d and %d degrees', (c, alpha, beta) => {
    const A: [number, number] = [0, 0];
    const B: [number, number] = [c, 0];
    // A looks east along AB (bearing 90) turned left by alpha; B looks west (270) turned right by beta.
    const fix = fixPosition([line('A', A, 90 - alpha), line('B', B, 270 + beta)], [], SETTINGS);
    const ac = (c * Math.sin(beta * DEG)) / Math.sin((alpha + beta) * DEG);
    const want = [ac * Math.cos(alpha * DEG), ac * Math.sin(alpha * DEG)];
    expect(fix.ok).toBe(true);
    expect(fix.east).toBeCloseTo(want[0]!, 6);
    expect(fix.north).toBeCloseTo(want[1]!, 6);
    expect(fix.flags).toContain('no-redundancy');
  });
});

describe('error ellipse', () => {
  // Chi-square with 2 degrees of freedom: 95 % quantile 5.991 (statistics tables), so the
  // one-sigma axes scale by sqrt(5.991) = 2.4477; 39.35 % is the one-sigma ellipse.
  it('scale factors match the chi-square (2 dof) table', () => {
    expect(ellipseScale(0.95)).toBeCloseTo(Math.sqrt(5.991), 3);
    expect(ellipseScale(0.99)).toBeCloseTo(Math.sqrt(9.21), 2);
    expect(ellipseScale(1 - Math.exp(-0.5))).toBeCloseTo(1, 9);
  });

  // numpy.linalg.eigh (an independent eigen-solver) on the same matrices.
  it('axes and orientation agree with numpy eigh', () => {
    const covs: [number, number, number][] = [
      [9, 0, 1],
      [1, 0, 9],
      [5, 4, 5],
      [5, -4, 5],
      [120.5, 33.2, 18.1],
      [2.25, -1.9, 7.4],
    ];
    const py = `
import json, math, sys
import numpy as np
out = []
for ee, en, nn in json.loads(sys.argv[1]):
    w, v = np.linalg.eigh(np.array([[ee, en], [en, nn]]))
    major = v[:, 1]
    out.append([math.sqrt(w[1]), math.sqrt(w[0]), math.degrees(math.atan2(major[0], major[1])) % 180.0])
print(json.dumps(out))`;
    const ref = JSON.parse(execFileSync('python3', ['-c', py, JSON.stringify(covs)], { encoding: 'utf8' })) as number[][];
    covs.forEach((cov, i) => {
      const e = errorEllipse(cov, 1 - Math.exp(-0.5));
      expect(e.majorM).toBeCloseTo(ref[i]![0]!, 9);
      expect(e.minorM).toBeCloseTo(ref[i]![1]!, 9);
      const d = Math.abs(e.orientationDeg - ref[i]![2]!);
      expect(Math.min(d, 180 - d)).toBeLessThan(1e-6);
    });
  });

  // Monte Carlo against the chi-square law: with Gaussian bearing errors, the true position
  // falls inside each fix's 95 % ellipse in about 95 % of trials.
  it('the 95 % ellipse covers the true position in 95 +- 1.5 % of 2000 noisy trials', () => {
    const target: [number, number] = [300, 420];
    const stations: [number, number][] = [
      [0, 0],
      [900, 0],
      [450, 1100],
    ];
    const noise = gaussian(seeded(42));
    const sd = 1;
    const k2 = ellipseScale(0.95) ** 2;
    let inside = 0;
    const trials = 2000;
    for (let t = 0; t < trials; t++) {
      const lines = stations.map((s, i) => line(`s${i}`, s, bearingTo(s, target) + sd * noise(), sd));
      const f = fixPosition(lines, [], { ...SETTINGS, positionSdM: 0, outlierSigma: 100 });
      const [ee, en, nn] = f.cov;
      const dx = target[0] - f.east;
      const dy = target[1] - f.north;
      const det = ee * nn - en * en;
      const m2 = (nn * dx * dx - 2 * en * dx * dy + ee * dy * dy) / det;
      if (m2 <= k2) inside++;
    }
    expect(inside / trials).toBeGreaterThan(0.935);
    expect(inside / trials).toBeLessThan(0.965);
  });
});

describe('geometry checks', () => {
  it('near-parallel bearings are flagged, not turned into a far point', () => {
    const f = fixPosition([line('A', [0, 0], 10), line('B', [100, 0], 8)], [], SETTINGS);
    expect(f.ok).toBe(false);
    expect(f.flags).toEqual(['poor-geometry']);
    expect(f.crossingDeg).toBeCloseTo(2, 6);
    // Exactly parallel too.
    expect(fixPosition([line('A', [0, 0], 30), line('B', [100, 0], 30)], [], SETTINGS).flags).toEqual(['poor-geometry']);
    // The same stations with a 25-degree crossing do give a fix.
    expect(fixPosition([line('A', [0, 0], 10), line('B', [100, 0], 345)], [], SETTINGS).ok).toBe(true);
  });

  it('a fix behind a station (the lines cross behind its ray) is refused', () => {
    // Line from A at 45 degrees and from B at 75 degrees meet at (-366, -366): behind both.
    const f = fixPosition([line('A', [0, 0], 45), line('B', [1000, 0], 75)], [], SETTINGS);
    expect(f.ok).toBe(false);
    expect(f.flags).toContain('behind-station');
    // B's bearing is reversed: its line still passes through the point where A's line
    // crosses it, (500, 500), but that point lies behind B.
    const g = fixPosition([line('A', [0, 0], 45), line('B', [1000, 0], 135)], [], SETTINGS);
    expect(g.ok).toBe(false);
    expect(g.flags).toContain('behind-station');
    expect(fixPosition([line('A', [0, 0], 45), line('B', [1000, 0], 315)], [], SETTINGS).ok).toBe(true);
  });

  it('one wrong bearing out of four is found and dropped (each station in turn, errors of 12 to 40 degrees)', () => {
    const target: [number, number] = [400, 600];
    const stations: [number, number][] = [
      [0, 0],
      [1000, 0],
      [1000, 1200],
      [0, 1200],
    ];
    const noise = gaussian(seeded(9));
    for (const wrong of [0, 1, 2, 3]) {
      for (const error of [12, -20, 40]) {
        const lines = stations.map((s, i) => line(`st${i}`, s, bearingTo(s, target) + noise() * 1 + (i === wrong ? error : 0), 1));
        const f = fixPosition(lines, [], SETTINGS);
        expect(f.ok).toBe(true);
        expect(f.dropped).toEqual([`st${wrong}`]);
        expect(f.flags).toContain('outlier-dropped');
        expect(Math.hypot(f.east - target[0], f.north - target[1])).toBeLessThan(30);
      }
    }
  });

  it('four good bearings keep all stations', () => {
    const target: [number, number] = [400, 600];
    const lines = [
      [0, 0],
      [1000, 0],
      [1000, 1200],
      [0, 1200],
    ].map((s, i) => line(`st${i}`, s as [number, number], bearingTo(s as [number, number], target), 1));
    const f = fixPosition(lines, [], SETTINGS);
    expect(f.dropped).toEqual([]);
    expect(f.flags).not.toContain('outlier-dropped');
    expect(f.residualM).toBeLessThan(1e-6);
  });
});

// Time-difference refinement: arrival times at synchronised stations are range / c after the
// emission (straight-line propagation, common practice, no source); adding them as
// constraints must shrink the error of bearing-only fixes.
describe('time-difference refinement', () => {
  it('arrival-time differences (1 ms onsets) cut the mean error of 3-degree bearing fixes', () => {
    const c = 343;
    const stations: [number, number][] = [
      [0, 0],
      [700, 50],
      [350, 800],
    ];
    const noise = gaussian(seeded(77));
    let errBearing = 0;
    let errBoth = 0;
    let emissionErr = 0;
    let areaBearing = 0;
    let areaBoth = 0;
    const trials = 300;
    for (let t = 0; t < trials; t++) {
      const target: [number, number] = [150 + 400 * ((t * 37) % 100) / 100, 200 + 400 * ((t * 61) % 100) / 100];
      const emission = 1000 + t;
      const lines: BearingLine[] = stations.map((s, i) => line(`s${i}`, s, bearingTo(s, target) + 3 * noise(), 3));
      const arrivals: Arrival[] = stations.map((s, i) => ({
        station: `s${i}`,
        at: [s[0], s[1], 0],
        timeS: emission + Math.hypot(target[0] - s[0], target[1] - s[1]) / c + 0.001 * noise(),
        sdS: 0.001,
      }));
      const a = fixPosition(lines, [], { ...SETTINGS, outlierSigma: 100 });
      const b = fixPosition(lines, arrivals, { ...SETTINGS, outlierSigma: 100 });
      expect(b.flags).toContain('time-differences');
      errBearing += Math.hypot(a.east - target[0], a.north - target[1]);
      errBoth += Math.hypot(b.east - target[0], b.north - target[1]);
      emissionErr += Math.abs(b.emissionS! - emission);
      areaBearing += Math.sqrt(a.cov[0] * a.cov[2] - a.cov[1] ** 2);
      areaBoth += Math.sqrt(b.cov[0] * b.cov[2] - b.cov[1] ** 2);
    }
    expect(errBoth / errBearing).toBeLessThan(0.5);
    expect(areaBoth).toBeLessThan(areaBearing);
    // Emission time recovered to a few ms (1 ms onsets, metre-level positions).
    expect(emissionErr / trials).toBeLessThan(0.005);
  });
});

import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import {
  angleDiffDeg,
  CircularAccumulator,
  circularMeanDeg,
  circularMoments,
  circularStdDeg,
  meanResultantLength,
} from '../../src/track/circular.js';
import { gauss, rng } from './synth.js';

describe('circular statistics (Mardia and Jupp, Directional Statistics, 2000, ch. 2)', () => {
  // The textbook's opening point (from memory): the mean direction of 350 and 10 degrees is 0,
  // whereas the arithmetic mean, 180, points the opposite way.
  it('mean of 350 and 10 degrees is 0, not 180 (Mardia and Jupp, from memory)', () => {
    expect(circularMeanDeg([350, 10])).toBeCloseTo(0, 10);
    expect(circularMeanDeg([170, -170])).toBeCloseTo(180, 10);
  });

  // Resultant of two unit vectors 90 degrees apart: direction 45, length cos 45 (plane geometry).
  it('two directions 90 degrees apart: mean 45, R = cos 45 = 0.70711, circular sd sqrt(-2 ln R) = 47.7 deg', () => {
    const m = circularMoments([0, 90]);
    expect(m.meanDeg).toBeCloseTo(45, 10);
    expect(m.r).toBeCloseTo(Math.SQRT1_2, 10);
    // sqrt(-2 ln 0.70711) = sqrt(ln 2) = 0.83255 rad = 47.70 deg
    expect(circularStdDeg([0, 90])).toBeCloseTo(47.70, 2);
  });

  it('three directions 120 degrees apart have R = 0 and no mean direction', () => {
    expect(meanResultantLength([0, 120, 240])).toBeCloseTo(0, 12);
    // R is 0 up to rounding, so the sd exceeds a full turn.
    expect(circularStdDeg([0, 120, 240])).toBeGreaterThan(360);
    expect(Number.isNaN(circularMeanDeg([]))).toBe(true);
    expect(circularStdDeg([])).toBe(Infinity);
  });

  it('identical directions: R = 1 and sd 0', () => {
    expect(meanResultantLength([33, 33, 33])).toBe(1);
    expect(circularStdDeg([33, 33, 33])).toBe(0);
  });

  // Weighted resultant: 3 (1, 0) + 1 (0, 1) points at atan(1/3) = 18.435 deg, length sqrt(10)/4.
  it('weighted mean of 0 (weight 3) and 90 (weight 1) is atan(1/3) = 18.435 deg, R = sqrt(10)/4', () => {
    const m = circularMoments([0, 90], [3, 1]);
    expect(m.meanDeg).toBeCloseTo(18.4349, 3);
    expect(m.r).toBeCloseTo(Math.sqrt(10) / 4, 10);
    expect(circularMeanDeg([0, 90, 90], [3, 0.5, 0.5])).toBeCloseTo(18.4349, 3);
  });

  // Wrapped normal WN(mu, sigma): rho = exp(-sigma^2 / 2), so sqrt(-2 ln rho) = sigma
  // (Mardia and Jupp 2000, section 3.5; from memory).
  it('wrapped normal sample: circular sd recovers sigma, mean recovers mu across the seam', () => {
    const rand = rng(7);
    const sigma = 25;
    const mu = 175;
    const xs = Array.from({ length: 40000 }, () => mu + sigma * gauss(rand));
    expect(circularStdDeg(xs)).toBeCloseTo(sigma, 0);
    expect(Math.abs(angleDiffDeg(circularMeanDeg(xs), mu))).toBeLessThan(0.5);
  });

  it('signed difference takes the short way round', () => {
    expect(angleDiffDeg(10, 350)).toBeCloseTo(20, 12);
    expect(angleDiffDeg(350, 10)).toBeCloseTo(-20, 12);
    expect(angleDiffDeg(-170, 170)).toBeCloseTo(20, 12);
    expect(angleDiffDeg(180, -180)).toBe(0);
    expect(angleDiffDeg(90, -90)).toBe(180);
  });

  it('the running accumulator matches the batch functions and rejects bad weights', () => {
    const acc = new CircularAccumulator();
    acc.add(350, 2);
    acc.add(20, 1);
    expect(acc.meanDeg()).toBeCloseTo(circularMeanDeg([350, 20], [2, 1]), 12);
    expect(acc.stdDeg()).toBeCloseTo(circularStdDeg([350, 20], [2, 1]), 12);
    expect(() => acc.add(10, -1)).toThrow(/weight/);
    expect(() => circularMoments([1, 2], [1])).toThrow(/weights/);
  });
});

// Independent tools: numpy (always on these machines) and scipy.stats.circmean / circstd
// when installed, on the same random weighted sample.
describe('circular statistics against numpy (and scipy when present)', () => {
  const rand = rng(11);
  const angles = Array.from({ length: 200 }, () => 160 + 40 * gauss(rand));
  const weights = Array.from({ length: 200 }, () => 0.1 + rand());
  const script = `
import json, sys, numpy as np
d = json.load(sys.stdin)
th = np.radians(np.array(d["a"])); w = np.array(d["w"])
z = np.sum(w * np.exp(1j * th)) / np.sum(w)
out = {"mean": float(np.degrees(np.angle(z))), "r": float(np.abs(z))}
zu = np.mean(np.exp(1j * th))
out["std_unweighted"] = float(np.degrees(np.sqrt(-2 * np.log(np.abs(zu)))))
try:
    from scipy.stats import circmean, circstd
    out["scipy_mean"] = float(np.degrees(circmean(th, high=np.pi, low=-np.pi)))
    out["scipy_std"] = float(np.degrees(circstd(th, high=np.pi, low=-np.pi)))
except ImportError:
    pass
print(json.dumps(out))
`;
  const ref = JSON.parse(execFileSync('python3', ['-c', script], { input: JSON.stringify({ a: angles, w: weights }) }).toString()) as {
    mean: number;
    r: number;
    std_unweighted: number;
    scipy_mean?: number;
    scipy_std?: number;
  };

  it('weighted mean direction and R match numpy', () => {
    const m = circularMoments(angles, weights);
    expect(Math.abs(angleDiffDeg(m.meanDeg, ref.mean))).toBeLessThan(1e-9);
    expect(m.r).toBeCloseTo(ref.r, 12);
    expect(circularStdDeg(angles)).toBeCloseTo(ref.std_unweighted, 9);
  });

  it.skipIf(ref.scipy_mean === undefined)('unweighted mean and sd match scipy.stats.circmean / circstd', () => {
    expect(Math.abs(angleDiffDeg(circularMeanDeg(angles), ref.scipy_mean!))).toBeLessThan(1e-9);
    expect(circularStdDeg(angles)).toBeCloseTo(ref.scipy_std!, 9);
  });
});

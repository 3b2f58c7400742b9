/**
 * Circular statistics for angles in degrees (K. V. Mardia and P. E. Jupp, Directional
 * Statistics, Wiley, 2000, chapter 2): mean direction, mean resultant length R, circular
 * standard deviation sqrt(-2 ln R), and the signed difference of two angles. Every function
 * takes optional non-negative weights (the weighted sample of the same chapter).
 *
 * Angles come back in (-180, 180]. An empty sample, zero total weight or a resultant of zero
 * length has no mean direction: the mean is NaN, R is 0 and the standard deviation Infinity.
 */
import { wrapDeg } from '../geometry/vec3.js';

const DEG = Math.PI / 180;

export { wrapDeg };

/** Signed difference a - b in (-180, 180]: how far to turn from b to reach a the short way. */
export function angleDiffDeg(a: number, b: number): number {
  return wrapDeg(a - b);
}

/** Mean direction and mean resultant length of a (weighted) sample. */
export interface CircularMoments {
  meanDeg: number;
  /** Mean resultant length R in [0, 1]: 1 when all angles agree, near 0 when spread evenly. */
  r: number;
}

/** Mean direction and R of a (weighted) sample of angles in degrees. */
export function circularMoments(anglesDeg: ArrayLike<number>, weights?: ArrayLike<number>): CircularMoments {
  if (weights !== undefined && weights.length !== anglesDeg.length) {
    throw new RangeError(`circular statistics: ${anglesDeg.length} angles but ${weights.length} weights`);
  }
  const acc = new CircularAccumulator();
  for (let i = 0; i < anglesDeg.length; i++) acc.add(anglesDeg[i]!, weights === undefined ? 1 : weights[i]!);
  return { meanDeg: acc.meanDeg(), r: acc.resultantLength() };
}

/** Circular mean direction in (-180, 180], degrees (NaN when undefined). */
export function circularMeanDeg(anglesDeg: ArrayLike<number>, weights?: ArrayLike<number>): number {
  return circularMoments(anglesDeg, weights).meanDeg;
}

/** Mean resultant length R in [0, 1]. */
export function meanResultantLength(anglesDeg: ArrayLike<number>, weights?: ArrayLike<number>): number {
  return circularMoments(anglesDeg, weights).r;
}

/** Circular standard deviation sqrt(-2 ln R), in degrees (Mardia and Jupp 2000, section 2.3). */
export function circularStdDeg(anglesDeg: ArrayLike<number>, weights?: ArrayLike<number>): number {
  return stdFromResultantDeg(circularMoments(anglesDeg, weights).r);
}

/** sqrt(-2 ln R) in degrees; 0 for R >= 1, Infinity for R <= 0. */
export function stdFromResultantDeg(r: number): number {
  if (!(r > 0)) return Infinity;
  if (r >= 1) return 0;
  return Math.sqrt(-2 * Math.log(r)) / DEG;
}

/**
 * Running weighted sums of cos and sin: add angles one at a time, read the statistics at any
 * point. Holds three numbers, so a stream can keep one per track without allocating per hop.
 */
export class CircularAccumulator {
  private sumCos = 0;
  private sumSin = 0;
  private sumW = 0;

  add(angleDeg: number, weight = 1): void {
    if (!(weight >= 0) || !Number.isFinite(weight)) throw new RangeError(`circular statistics: weight ${weight} is not a finite non-negative number`);
    if (!Number.isFinite(angleDeg)) throw new RangeError(`circular statistics: angle ${angleDeg} is not finite`);
    this.sumCos += weight * Math.cos(angleDeg * DEG);
    this.sumSin += weight * Math.sin(angleDeg * DEG);
    this.sumW += weight;
  }

  reset(): void {
    this.sumCos = 0;
    this.sumSin = 0;
    this.sumW = 0;
  }

  totalWeight(): number {
    return this.sumW;
  }

  meanDeg(): number {
    return meanFromSums(this.sumCos, this.sumSin);
  }

  resultantLength(): number {
    return resultantFromSums(this.sumCos, this.sumSin, this.sumW);
  }

  stdDeg(): number {
    return stdFromResultantDeg(this.resultantLength());
  }
}

/** Mean direction from sums of w cos and w sin (NaN when the resultant is zero). */
export function meanFromSums(sumCos: number, sumSin: number): number {
  if (sumCos === 0 && sumSin === 0) return NaN;
  return wrapDeg(Math.atan2(sumSin, sumCos) / DEG);
}

/** R from sums of w cos, w sin and w, clamped to [0, 1] against rounding. */
export function resultantFromSums(sumCos: number, sumSin: number, sumW: number): number {
  if (!(sumW > 0)) return 0;
  return Math.min(1, Math.sqrt(sumCos * sumCos + sumSin * sumSin) / sumW);
}

/**
 * atan2 by a polynomial: several times cheaper than Math.atan2 (a call into the C library), for
 * loops that take one per frequency bin and pair (the bin directions, ../analysis/bin-directions.ts)
 * where an error of a few microradians is far below what the phases hold.
 *
 * atan(z) on [0, 1] as z times a polynomial in z^2 (odd terms to z^11), the coefficients fitted
 * here by iteratively reweighted least squares towards the smallest largest error (the same
 * form and close to the coefficients common in numerical practice, no source); the other
 * octants by atan(z) = pi/2 - atan(1/z) and the signs. Largest error 1.7e-6 rad (checked against
 * Math.atan2 in test/util/fast-atan2.test.ts).
 */
const C1 = 0.9999772190605013;
const C3 = -0.3326228300437809;
const C5 = 0.1935404012705665;
const C7 = -0.11642656662286224;
const C9 = 0.05264746066824555;
const C11 = -0.011719183588556142;
const HALF_PI = Math.PI / 2;

/** The angle of (x, y) in radians, in [-pi, pi] (within 1.7e-6 of Math.atan2; 0 and NaN cases as Math.atan2). */
export function fastAtan2(y: number, x: number): number {
  const ax = Math.abs(x);
  const ay = Math.abs(y);
  const big = ax > ay ? ax : ay;
  if (!(big > 0) || big === Infinity) return Math.atan2(y, x);
  const z = (ax > ay ? ay : ax) / big;
  const s = z * z;
  let r = z * (C1 + s * (C3 + s * (C5 + s * (C7 + s * (C9 + s * C11)))));
  if (ay > ax) r = HALF_PI - r;
  if (x < 0) r = Math.PI - r;
  return y < 0 ? -r : r;
}

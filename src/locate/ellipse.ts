/**
 * Covariance of an east/north position -> error ellipse. For a 2-D normal position error the
 * squared Mahalanobis distance is chi-square with 2 degrees of freedom, whose CDF is
 * 1 - exp(-x / 2); the ellipse holding probability p therefore has semi-axes
 * sqrt(-2 ln(1 - p)) times the square roots of the covariance's eigenvalues.
 */

/** Symmetric 2x2 covariance [var_east, cov_east_north, var_north], m^2. */
export type Covariance2 = readonly [number, number, number];

export interface ErrorEllipse {
  /** Semi-major and semi-minor axes, metres. */
  majorM: number;
  minorM: number;
  /** Direction of the major axis, degrees clockwise from north, in [0, 180). */
  orientationDeg: number;
  /** Probability that the true position lies inside. */
  level: number;
}

/** Scale from one-sigma axes to the ellipse of probability `level` (2 degrees of freedom). */
export function ellipseScale(level: number): number {
  return Math.sqrt(-2 * Math.log(1 - level));
}

export function errorEllipse(cov: Covariance2, level: number): ErrorEllipse {
  const [ee, en, nn] = cov;
  const mean = (ee + nn) / 2;
  const half = Math.hypot((ee - nn) / 2, en);
  const l1 = mean + half;
  const l2 = Math.max(0, mean - half);
  // Major-axis angle from east (counter-clockwise): tan(2 theta) = 2 en / (ee - nn).
  const thetaFromEast = 0.5 * Math.atan2(2 * en, ee - nn);
  let fromNorth = 90 - (thetaFromEast * 180) / Math.PI;
  fromNorth = ((fromNorth % 180) + 180) % 180;
  const k = ellipseScale(level);
  return { majorM: k * Math.sqrt(l1), minorM: k * Math.sqrt(l2), orientationDeg: fromNorth, level };
}

/**
 * The direction that best explains a set of pair delays for given mic positions, and the
 * angle between two directions: used for the direction error left in each bench take.
 * Pure; a coarse grid over the sphere (or the horizon) refined by finer local grids.
 */
import { azElFromVector, dot, sub, unitFromAzEl, type Vec3 } from '../geometry/vec3.js';

const DEG = Math.PI / 180;

function cost(positions: readonly Vec3[], pairs: readonly (readonly [number, number])[], tdoaS: Float64Array, c: number, u: Vec3): number {
  let s = 0;
  for (let p = 0; p < pairs.length; p++) {
    const t = tdoaS[p]!;
    if (!Number.isFinite(t)) continue;
    const [a, b] = pairs[p]!;
    const e = t - dot(sub(positions[a]!, positions[b]!), u) / c;
    s += e * e;
  }
  return s;
}

/**
 * Least-squares direction for delays `tdoaS` (pairs in interface.md order). `horizontal`
 * keeps the search at elevation 0.
 */
export function bestDirection(
  positions: readonly Vec3[],
  pairs: readonly (readonly [number, number])[],
  tdoaS: Float64Array,
  c: number,
  horizontal: boolean,
): { azimuthDeg: number; elevationDeg: number } {
  let bestAz = 0;
  let bestEl = 0;
  let best = Infinity;
  const scan = (azC: number, elC: number, azHalf: number, elHalf: number, step: number): void => {
    for (let az = azC - azHalf; az <= azC + azHalf + 1e-9; az += step) {
      const elLo = horizontal ? 0 : Math.max(-90, elC - elHalf);
      const elHi = horizontal ? 0 : Math.min(90, elC + elHalf);
      for (let el = elLo; el <= elHi + 1e-9; el += step) {
        const v = cost(positions, pairs, tdoaS, c, unitFromAzEl(az, el));
        if (v < best) {
          best = v;
          bestAz = az;
          bestEl = el;
        }
      }
    }
  };
  scan(0, 0, 180, 90, 2);
  for (const step of [0.2, 0.02, 0.002]) scan(bestAz, bestEl, step * 10, step * 10, step);
  const { azimuthDeg, elevationDeg } = azElFromVector(unitFromAzEl(bestAz, bestEl));
  return { azimuthDeg, elevationDeg };
}

/** Angle between two directions, degrees. */
export function angleBetweenDeg(u: Vec3, v: Vec3): number {
  const d = Math.max(-1, Math.min(1, dot(u, v)));
  return Math.acos(d) / DEG;
}

/**
 * A pair sees only the angle to its axis (a cone: front and back, up and down alike). The
 * cone angle, degrees, of a delay for a pair whose axis runs from mic 0 to mic 1 with spacing
 * `spacingM`: cos(angle) = -c tdoa / spacing (tdoa = (p0 - p1) . u / c).
 */
export function pairConeAngleDeg(tdoaS: number, spacingM: number, c: number): number {
  const x = Math.max(-1, Math.min(1, (-c * tdoaS) / spacingM));
  return Math.acos(x) / DEG;
}

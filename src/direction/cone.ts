/**
 * A line of mics (a pair, or colinear mics) resolves only the angle between a source and its
 * axis: a cone around the axis. Its direction is reported where the cone meets the horizontal
 * plane, on the side the mirror convention picks (src/geometry/array-mirror.ts).
 */
import type { ArrayMirror } from '../geometry/array-mirror.js';
import { wrapDeg, type Vec3 } from '../geometry/vec3.js';

const DEG = 180 / Math.PI;

/**
 * Azimuth (degrees) of the horizontal direction u on the reported side with u . axis = cosAngle
 * (axis a unit vector, possibly tilted up to the limit of array-mirror.ts). When the cone does
 * not reach the horizontal plane (a source high above a tilted line), the nearest horizontal
 * direction: along the axis's horizontal projection, or against it.
 */
export function coneAzimuthDeg(cosAngle: number, axis: Vec3, mirror: ArrayMirror): number {
  const h = Math.hypot(axis[0], axis[1]);
  const alphaDeg = Math.atan2(axis[0], axis[1]) * DEG;
  const phiDeg = Math.acos(Math.max(-1, Math.min(1, cosAngle / h))) * DEG;
  // The reported side: the half circle centred on mirror.sideDeg, which is alpha +- 90.
  const sign = wrapDeg((mirror.sideDeg ?? 0) - alphaDeg) >= 0 ? 1 : -1;
  return wrapDeg(alphaDeg + sign * phiDeg);
}

/**
 * A line of mics (a pair, or colinear mics) resolves only the angle between a source and its
 * axis: a cone around the axis. Its direction is reported where the cone meets the horizontal
 * plane, on the side the mirror convention picks (src/geometry/array-mirror.ts).
 */
import type { ArrayMirror } from '../geometry/array-mirror.js';
import { wrapDeg, type Vec3 } from '../geometry/vec3.js';
import { fastAtan2 } from '../util/fast-atan2.js';

const DEG = 180 / Math.PI;

/**
 * Azimuth (degrees) of the horizontal direction u on the reported side with u . axis = cosAngle
 * (axis a unit vector, possibly tilted up to the limit of array-mirror.ts). When the cone does
 * not reach the horizontal plane (a source high above a tilted line), the nearest horizontal
 * direction: along the axis's horizontal projection, or against it.
 */
export function coneAzimuthDeg(cosAngle: number, axis: Vec3, mirror: ArrayMirror): number {
  return new LineCone(axis, mirror).azimuthDeg(cosAngle);
}

/** coneAzimuthDeg for one axis and mirror, with what depends on them alone worked out once. */
export class LineCone {
  /** The axis's horizontal length, its azimuth (degrees) and the reported side (+1 or -1). */
  private readonly h: number;
  private readonly alphaDeg: number;
  private readonly sign: number;

  constructor(axis: Vec3, mirror: ArrayMirror) {
    this.h = Math.hypot(axis[0], axis[1]);
    this.alphaDeg = Math.atan2(axis[0], axis[1]) * DEG;
    // The reported side: the half circle centred on mirror.sideDeg, which is alpha +- 90.
    this.sign = wrapDeg((mirror.sideDeg ?? 0) - this.alphaDeg) >= 0 ? 1 : -1;
  }

  azimuthDeg(cosAngle: number): number {
    const phiDeg = Math.acos(Math.max(-1, Math.min(1, cosAngle / this.h))) * DEG;
    return wrapDeg(this.alphaDeg + this.sign * phiDeg);
  }

  /** azimuthDeg with the arc cosine by the polynomial atan2 (within 2e-6 rad): for the directions of single bins. */
  azimuthDegFast(cosAngle: number): number {
    const c = Math.max(-1, Math.min(1, cosAngle / this.h));
    const phiDeg = fastAtan2(Math.sqrt(1 - c * c), c) * DEG;
    return wrapDeg(this.alphaDeg + this.sign * phiDeg);
  }
}

/**
 * Angle errors as an array can resolve them. A pair or a line sees only the angle to its axis:
 * a direction and its mirror image about the axis are one answer, so the error is the smaller
 * of the two (for interface.md's pair along x this is src/accuracy/score.ts's front fold, here
 * for any axis). A planar array cannot tell up from down: azimuth only. A 3-D array: the
 * great-circle angle between the directions.
 */
import type { ArrayGeometry } from '../../../src/geometry/array-geometry.js';
import { dot, norm, sub, unitFromAzEl, wrapDeg, type Vec3 } from '../../../src/geometry/vec3.js';

export type Ambiguity = { readonly kind: 'axis'; readonly axisAzDeg: number } | { readonly kind: 'plane' } | { readonly kind: 'space' };

export interface Direction {
  readonly azimuthDeg: number;
  readonly elevationDeg: number | null;
}

const RAD = 180 / Math.PI;

function cross(a: Vec3, b: Vec3): Vec3 {
  return [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];
}

/** What an array cannot resolve, from its mic positions (independent of the analysis' own notion). */
export function ambiguityOf(g: ArrayGeometry): Ambiguity {
  const p = g.mics.map((m) => m.position);
  const p0 = p[0]!;
  const scale = Math.max(...p.map((q) => norm(sub(q, p0))));
  const tol = 1e-6 * scale * scale;
  let far = p[1]!;
  for (const q of p) if (norm(sub(q, p0)) > norm(sub(far, p0))) far = q;
  const axis = sub(far, p0);
  const collinear = p.every((q) => norm(cross(sub(q, p0), axis)) < tol);
  if (collinear) return { kind: 'axis', axisAzDeg: Math.atan2(axis[0], axis[1]) * RAD };
  let normal: Vec3 = [0, 0, 0];
  for (const q of p) {
    const c = cross(axis, sub(q, p0));
    if (norm(c) > norm(normal)) normal = c;
  }
  const planar = p.every((q) => Math.abs(dot(sub(q, p0), normal)) < tol * scale);
  return planar ? { kind: 'plane' } : { kind: 'space' };
}

/** Mirror image of an azimuth about an axis at azimuth `axisAzDeg` (a reflection: theta -> 2 axis - theta). */
export function mirrorAbout(azimuthDeg: number, axisAzDeg: number): number {
  return wrapDeg(2 * axisAzDeg - azimuthDeg);
}

/** Error (degrees, 0..180) of an estimate against a true direction, as the array can resolve it. */
export function angleError(est: Direction, truth: { azimuthDeg: number; elevationDeg: number }, amb: Ambiguity): number {
  switch (amb.kind) {
    case 'axis': {
      const direct = Math.abs(wrapDeg(est.azimuthDeg - truth.azimuthDeg));
      const mirrored = Math.abs(wrapDeg(mirrorAbout(est.azimuthDeg, amb.axisAzDeg) - truth.azimuthDeg));
      return Math.min(direct, mirrored);
    }
    case 'plane':
      return Math.abs(wrapDeg(est.azimuthDeg - truth.azimuthDeg));
    case 'space': {
      const u = unitFromAzEl(est.azimuthDeg, est.elevationDeg ?? 0);
      const v = unitFromAzEl(truth.azimuthDeg, truth.elevationDeg);
      return Math.acos(Math.max(-1, Math.min(1, dot(u, v)))) * RAD;
    }
  }
}

/**
 * What an array's layout lets it resolve: the principal axes of its mic positions tell a line
 * (colinear mics), a plane, or a solid (3-D) array.
 */
import { type ArrayGeometry } from './array-geometry.js';
import type { Vec3 } from './vec3.js';

/** The shape of an array decides what it can resolve. */
export type ArrayShape = 'line' | 'plane' | 'solid';

/** Principal axes of the mic positions: shape, and the line's axis or the plane's normal. */
export function arrayShape(g: ArrayGeometry): { shape: ArrayShape; axis: Vec3 } {
  const n = g.mics.length;
  const c = [0, 0, 0];
  for (const m of g.mics) for (let i = 0; i < 3; i++) c[i]! += m.position[i]! / n;
  // Scatter matrix and its eigenvalues by Jacobi rotations (3x3, symmetric).
  const a = [
    [0, 0, 0],
    [0, 0, 0],
    [0, 0, 0],
  ];
  for (const m of g.mics) {
    const d = [m.position[0] - c[0]!, m.position[1] - c[1]!, m.position[2] - c[2]!];
    for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) a[i]![j]! += d[i]! * d[j]!;
  }
  const v = [
    [1, 0, 0],
    [0, 1, 0],
    [0, 0, 1],
  ];
  for (let sweep = 0; sweep < 30; sweep++) {
    for (let p = 0; p < 2; p++) {
      for (let q = p + 1; q < 3; q++) {
        const apq = a[p]![q]!;
        if (Math.abs(apq) < 1e-18) continue;
        const theta = (a[q]![q]! - a[p]![p]!) / (2 * apq);
        const t = Math.sign(theta || 1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
        const cs = 1 / Math.sqrt(t * t + 1);
        const sn = t * cs;
        for (let k = 0; k < 3; k++) {
          const akp = a[k]![p]!;
          const akq = a[k]![q]!;
          a[k]![p] = cs * akp - sn * akq;
          a[k]![q] = sn * akp + cs * akq;
        }
        for (let k = 0; k < 3; k++) {
          const apk = a[p]![k]!;
          const aqk = a[q]![k]!;
          a[p]![k] = cs * apk - sn * aqk;
          a[q]![k] = sn * apk + cs * aqk;
        }
        for (let k = 0; k < 3; k++) {
          const vkp = v[k]![p]!;
          const vkq = v[k]![q]!;
          v[k]![p] = cs * vkp - sn * vkq;
          v[k]![q] = sn * vkp + cs * vkq;
        }
      }
    }
  }
  const eig = [0, 1, 2].map((i) => ({ value: a[i]![i]!, vec: [v[0]![i]!, v[1]![i]!, v[2]![i]!] as Vec3 }));
  eig.sort((x, y) => y.value - x.value);
  const scale = eig[0]!.value;
  // A dimension thinner than 1 mm rms (relative to the largest) counts as flat.
  const flat = (e: number) => e < Math.max(1e-6 * n, 1e-4 * scale);
  if (flat(eig[1]!.value)) return { shape: 'line', axis: eig[0]!.vec };
  if (flat(eig[2]!.value)) return { shape: 'plane', axis: eig[2]!.vec };
  return { shape: 'solid', axis: [0, 0, 1] };
}

/**
 * Source positions over time and the emission time of the sound heard at a point.
 * Paths are linear between their timed points and held before the first and after the last.
 */
import type { Vec3 } from '../geometry/vec3.js';
import { DIRECT, imagePosition, type ImageSource } from './room.js';
import type { Motion } from './scene.js';

/** Position lookup with a remembered segment, fast for times that move forward. */
export class MotionCursor {
  private seg = 0;

  constructor(private readonly motion: Motion) {}

  at(t: number): Vec3 {
    const m = this.motion;
    if (m.kind === 'fixed') return m.position;
    const pts = m.points;
    const last = pts.length - 1;
    if (t <= pts[0]!.timeS) return pts[0]!.position;
    if (t >= pts[last]!.timeS) return pts[last]!.position;
    while (this.seg > 0 && t < pts[this.seg]!.timeS) this.seg--;
    while (this.seg < last - 1 && t >= pts[this.seg + 1]!.timeS) this.seg++;
    const a = pts[this.seg]!;
    const b = pts[this.seg + 1]!;
    const u = (t - a.timeS) / (b.timeS - a.timeS);
    return [a.position[0] + u * (b.position[0] - a.position[0]), a.position[1] + u * (b.position[1] - a.position[1]), a.position[2] + u * (b.position[2] - a.position[2])];
  }
}

/** Largest speed along a motion (m/s). */
export function maxSpeed(m: Motion): number {
  if (m.kind === 'fixed') return 0;
  let v = 0;
  for (let i = 1; i < m.points.length; i++) {
    const a = m.points[i - 1]!;
    const b = m.points[i]!;
    const d = Math.hypot(b.position[0] - a.position[0], b.position[1] - a.position[1], b.position[2] - a.position[2]);
    v = Math.max(v, d / (b.timeS - a.timeS));
  }
  return v;
}

/** Distance of the closest approach of a motion to point q (exact on each linear segment). */
export function closestApproach(m: Motion, q: Vec3): number {
  const dist = (p: Vec3): number => Math.hypot(p[0] - q[0], p[1] - q[1], p[2] - q[2]);
  if (m.kind === 'fixed') return dist(m.position);
  let best = Infinity;
  for (let i = 1; i < m.points.length; i++) {
    const a = m.points[i - 1]!.position;
    const b = m.points[i]!.position;
    const ab: Vec3 = [b[0] - a[0], b[1] - a[1], b[2] - a[2]];
    const len2 = ab[0] * ab[0] + ab[1] * ab[1] + ab[2] * ab[2];
    const u = len2 > 0 ? Math.max(0, Math.min(1, ((q[0] - a[0]) * ab[0] + (q[1] - a[1]) * ab[1] + (q[2] - a[2]) * ab[2]) / len2)) : 0;
    best = Math.min(best, dist([a[0] + u * ab[0], a[1] + u * ab[1], a[2] + u * ab[2]]));
  }
  return best;
}

/**
 * Solves te = t - |image(p(te)) - listener| / c by fixed-point iteration (it contracts by
 * v / c per step), warm-started from `guess`. Returns the emission time and the distance.
 */
export function emissionTime(cursor: MotionCursor, image: ImageSource, listener: Vec3, t: number, c: number, guess: number): { te: number; r: number } {
  let te = guess;
  let r = 0;
  for (let k = 0; k < 12; k++) {
    const p = image === DIRECT ? cursor.at(te) : imagePosition(image, cursor.at(te));
    r = Math.hypot(p[0] - listener[0], p[1] - listener[1], p[2] - listener[2]);
    const next = t - r / c;
    const done = Math.abs(next - te) < 1e-12;
    te = next;
    if (done) break;
  }
  return { te, r };
}

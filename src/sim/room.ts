/**
 * Image sources of a shoebox room (J. B. Allen and D. A. Berkley, "Image method for
 * efficiently simulating small-room acoustics", JASA 65(4), 943-950, 1979).
 *
 * The room spans [0, L] on each axis of the scene frame. Along one axis the images of a
 * source at s are at (1 - 2q) s + 2 n L for q in {0, 1} and whole n; such an image has met the
 * wall at 0 |n - q| times and the wall at L |n| times. Each meeting scales the pressure by
 * the wall's reflection factor beta = sqrt(1 - alpha) (alpha = energy absorption).
 * Absorption is the same at all frequencies; air absorption is left out.
 */
import type { Vec3 } from '../geometry/vec3.js';
import type { Room, WallAbsorption } from './scene.js';

/** One image: position = sign * source + offset on each axis; gain = product of reflection factors. */
export interface ImageSource {
  readonly sign: Vec3;
  readonly offset: Vec3;
  readonly gain: number;
  readonly order: number;
}

export const DIRECT: ImageSource = { sign: [1, 1, 1], offset: [0, 0, 0], gain: 1, order: 0 };

export function imagePosition(img: ImageSource, p: Vec3): Vec3 {
  return [img.sign[0] * p[0] + img.offset[0], img.sign[1] * p[1] + img.offset[1], img.sign[2] * p[2] + img.offset[2]];
}

interface AxisImage {
  sign: number;
  offset: number;
  gain: number;
  order: number;
}

function axisImages(length: number, beta0: number, betaL: number, maxOrder: number): AxisImage[] {
  const out: AxisImage[] = [];
  const nMax = Math.ceil(maxOrder / 2) + 1;
  for (let n = -nMax; n <= nMax; n++) {
    for (const q of [0, 1]) {
      const k0 = Math.abs(n - q);
      const kL = Math.abs(n);
      const order = k0 + kL;
      if (order > maxOrder) continue;
      out.push({ sign: 1 - 2 * q, offset: 2 * n * length, gain: beta0 ** k0 * betaL ** kL, order });
    }
  }
  return out;
}

function reflectionFactors(a: WallAbsorption): number[] {
  return [a.west, a.east, a.south, a.north, a.floor, a.ceiling].map((alpha) => Math.sqrt(Math.max(0, 1 - alpha)));
}

/**
 * Images of a source at `source` heard around `listener`, up to `maxOrder` reflections and
 * arriving no more than `cutoffS` after the direct sound (Infinity for no time limit).
 * `margin` (m) widens the time test, so the same set serves every mic of an array.
 */
export function imageSources(room: Room, source: Vec3, listener: Vec3, speedOfSound: number, maxOrder: number, cutoffS: number, margin = 0): ImageSource[] {
  const b = reflectionFactors(room.absorption);
  const axes = [0, 1, 2].map((k) => axisImages(room.sizeM[k]!, b[2 * k]!, b[2 * k + 1]!, maxOrder));
  const direct = Math.hypot(source[0] - listener[0], source[1] - listener[1], source[2] - listener[2]);
  const reach = direct + speedOfSound * cutoffS + 2 * margin;
  const out: ImageSource[] = [];
  const [ax, ay, az] = axes as [AxisImage[], AxisImage[], AxisImage[]];
  for (const x of ax) {
    const dx = x.sign * source[0] + x.offset - listener[0];
    if (Math.abs(dx) > reach) continue;
    for (const y of ay) {
      if (x.order + y.order > maxOrder) continue;
      const dy = y.sign * source[1] + y.offset - listener[1];
      if (dx * dx + dy * dy > reach * reach) continue;
      for (const z of az) {
        const order = x.order + y.order + z.order;
        if (order > maxOrder) continue;
        const dz = z.sign * source[2] + z.offset - listener[2];
        if (dx * dx + dy * dy + dz * dz > reach * reach) continue;
        const gain = x.gain * y.gain * z.gain;
        if (gain === 0) continue;
        out.push({ sign: [x.sign, y.sign, z.sign], offset: [x.offset, y.offset, z.offset], gain, order });
      }
    }
  }
  return out;
}

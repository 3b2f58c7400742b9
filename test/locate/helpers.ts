/** Shared test helpers: a seeded random generator and quick station/line builders. */
import type { BearingLine, SolverSettings } from '../../src/locate/intersect.js';

/** mulberry32: small seeded uniform generator, so Monte-Carlo checks are repeatable. */
export function seeded(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Standard normal deviates by the Box-Muller transform. */
export function gaussian(rand: () => number): () => number {
  return () => Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());
}

const DEG = Math.PI / 180;

/** True compass bearing (degrees) from a station at (e, n) to a target. */
export function bearingTo(from: readonly [number, number], to: readonly [number, number]): number {
  return ((Math.atan2(to[0] - from[0], to[1] - from[1]) / DEG) + 360) % 360;
}

export function line(station: string, at: readonly [number, number], bearingDeg: number, sdDeg = 1): BearingLine {
  return { station, at: [at[0], at[1], 0], dir: [Math.sin(bearingDeg * DEG), Math.cos(bearingDeg * DEG)], sdRad: sdDeg * DEG };
}

export const SETTINGS: SolverSettings = { speedOfSound: 343, positionSdM: 0.5, minCrossingDeg: 15, outlierSigma: 3 };

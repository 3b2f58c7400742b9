/** Shared test helpers: a seeded random generator and quick station/line builders. */
import { seededUniform } from '../helpers/random.js';
import type { BearingLine, SolverSettings } from '../../src/locate/intersect.js';

/** Seeded uniform generator (shared test helper). */
export const seeded = seededUniform;

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

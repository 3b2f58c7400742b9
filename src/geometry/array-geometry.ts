import { UsageError } from '../util/errors.js';
import type { Vec3 } from './vec3.js';

/** One microphone: the stream channel it is recorded on and its position in the array frame (m). */
export interface Mic {
  readonly channel: number;
  readonly position: Vec3;
}

/** A microphone array: mics sorted by channel number (channel i is mics[i]). */
export interface ArrayGeometry {
  readonly name: string;
  /** Compass heading of the array's front (+y), degrees clockwise from north; null when unknown. */
  readonly headingDeg: number | null;
  readonly mics: readonly Mic[];
}

/** A mic pair by channel number, a < b. tdoa = arrival at b minus arrival at a. */
export type MicPair = readonly [number, number];

/** Largest spacing --spacing accepts (m); a wider "pair" is almost surely a unit mistake. */
export const MAX_PAIR_SPACING_M = 20;

/**
 * The two-mic pair of interface.md: channel 0 at (-D/2, 0, 0) (left),
 * channel 1 at (+D/2, 0, 0) (right).
 */
export function pairGeometry(spacingM: number): ArrayGeometry {
  if (!Number.isFinite(spacingM) || spacingM <= 0) {
    throw new UsageError(`--spacing ${spacingM} is not a positive distance: give the mic spacing in metres, e.g. --spacing 0.2`);
  }
  if (spacingM > MAX_PAIR_SPACING_M) {
    throw new UsageError(
      `--spacing ${spacingM} m is absurd for a mic pair (over ${MAX_PAIR_SPACING_M} m): give the spacing in metres, e.g. 0.2 for 20 cm`,
    );
  }
  return {
    name: `pair-${spacingM}m`,
    headingDeg: null,
    mics: [
      { channel: 0, position: [-spacingM / 2, 0, 0] },
      { channel: 1, position: [spacingM / 2, 0, 0] },
    ],
  };
}

/** All mic pairs, ordered (0,1), (0,2), ... (1,2), ... by channel (interface.md). */
export function micPairs(geometry: ArrayGeometry): MicPair[] {
  const pairs: MicPair[] = [];
  const n = geometry.mics.length;
  for (let a = 0; a < n; a++) for (let b = a + 1; b < n; b++) pairs.push([a, b]);
  return pairs;
}

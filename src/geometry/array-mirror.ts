/**
 * The mirror ambiguity of an array, derived from its geometry, and the convention for which of
 * two mirror directions is reported.
 *
 * - A line (a pair, or 3 to 8 colinear mics) resolves only the angle between a source and its
 *   axis: a cone. bearline reports the direction on that cone in the horizontal plane, which
 *   leaves two candidates: mirror images across the vertical plane that holds the axis.
 * - A plane resolves a direction up to its mirror image across the plane.
 * - A solid (3-D) array has no mirror.
 *
 * Convention (README "Conventions"): of the two mirror directions, report the one with the
 * larger front component (+y); when both have the same (the mirror plane holds y: a line along
 * y, within ALONG_Y_TOLERANCE_DEG), the one on the right (+x). A mirror plane that is closer to
 * horizontal than to upright (a horizontal planar array) flips up and down instead: its upper
 * side is reported. So the pair of interface.md (axis along x) reports [-90, 90] (front), and a
 * pair along y reports [0, 180] (right).
 *
 * The mirror is named by the component it flips most: 'front-back' (y), 'left-right' (x),
 * 'up-down' (z); an oblique axis at exactly 45 degrees counts as 'front-back'. For mirrors that
 * flip azimuth (an upright mirror plane: lines and upright planar arrays) `axisDeg` gives the
 * azimuth of the mirror plane's horizontal line in [0, 180): an azimuth a and 2 axisDeg - a cannot
 * be told apart (exactly so for sources in the horizontal plane, or any source on an upright
 * plane's array).
 */
import { UsageError } from '../util/errors.js';
import type { ArrayGeometry } from './array-geometry.js';
import { arrayShape, type ArrayShape } from './array-shape.js';
import { wrapDeg, type Vec3 } from './vec3.js';

export type MirrorKind = 'front-back' | 'left-right' | 'up-down';

export interface ArrayMirror {
  /** The component the mirror flips most. */
  readonly kind: MirrorKind;
  /** Unit normal of the mirror plane, pointing to the side that is reported (u . normal >= 0). */
  readonly normal: Vec3;
  /**
   * Azimuth mirrors (upright mirror plane): azimuth of the mirror plane's horizontal line,
   * degrees in [0, 180); a and 2 axisDeg - a look alike. null for 'up-down'.
   */
  readonly axisDeg: number | null;
  /**
   * Azimuth mirrors: centre of the half circle of reported azimuths (axisDeg +- 90), degrees in
   * (-180, 180]; reported azimuths lie within 90 degrees of it. null for 'up-down'.
   */
  readonly sideDeg: number | null;
}

/**
 * A mirror plane within this angle of holding the y axis counts as holding it (the tie goes to
 * the right). Near y the two images' front components differ little and which is larger turns on
 * the sign of the tilt, so a pair laid along y by hand (a few degrees off) would report left or
 * right by chance; within this tolerance it always reports the right.
 */
export const ALONG_Y_TOLERANCE_DEG = 5;
/** A line steeper than this (degrees from horizontal) resolves mostly elevation: refused. */
export const MAX_LINE_TILT_DEG = 60;

const DEG = 180 / Math.PI;
/** Components this close count as equal (a 45 degree axis given with rounded positions is a tie). */
const TIE = 1e-9;

/** The mirror of a plane with this normal (any length, any sign), oriented by the convention. */
export function mirrorOfPlaneNormal(normal: Vec3): ArrayMirror {
  const len = Math.hypot(normal[0], normal[1], normal[2]);
  if (!(len > 0)) throw new Error('mirrorOfPlaneNormal: zero normal');
  const [x, y, z] = [normal[0] / len, normal[1] / len, normal[2] / len];
  const ax = Math.abs(x);
  const ay = Math.abs(y);
  const az = Math.abs(z);
  if (az >= Math.max(ax, ay) - TIE) {
    const s = z >= 0 ? 1 : -1;
    return { kind: 'up-down', normal: [s * x, s * y, s * z], axisDeg: null, sideDeg: null };
  }
  const h = Math.hypot(x, y);
  // The mirror plane holds y (its normal lies along x): both images share their front component.
  const holdsY = ay <= Math.sin(ALONG_Y_TOLERANCE_DEG / DEG) * h;
  const s = (holdsY ? x : y) >= 0 ? 1 : -1;
  const n: Vec3 = [s * x, s * y, s * z];
  const sideDeg = wrapDeg(Math.atan2(n[0], n[1]) * DEG);
  const axisDeg = (((sideDeg + 90) % 180) + 180) % 180;
  return { kind: ay >= ax - TIE ? 'front-back' : 'left-right', normal: n, axisDeg, sideDeg };
}

/**
 * The mirror of a line along `axis` (reported in the horizontal plane): the upright plane that
 * holds the axis. Throws a UsageError for a line steeper than MAX_LINE_TILT_DEG.
 */
export function mirrorOfLine(axis: Vec3, name: string): ArrayMirror {
  const h = Math.hypot(axis[0], axis[1]);
  const tiltDeg = Math.atan2(Math.abs(axis[2]), h) * DEG;
  if (tiltDeg > MAX_LINE_TILT_DEG) {
    throw new UsageError(
      `the array "${name}" is a line ${tiltDeg.toFixed(0)} degrees from horizontal: a line resolves only the angle between a source and its axis, ` +
        `which for a near-vertical line is the elevation, not the azimuth bearline reports; lay the line within ${MAX_LINE_TILT_DEG} degrees of horizontal, or add a mic off the line`,
    );
  }
  return mirrorOfPlaneNormal([axis[1], -axis[0], 0]);
}

/**
 * The array's mirror (null for a solid array, which has none); a near-vertical line is a
 * UsageError. `shaped` passes arrayShape's result when the caller has it already.
 */
export function arrayMirror(g: ArrayGeometry, shaped: { shape: ArrayShape; axis: Vec3 } = arrayShape(g)): ArrayMirror | null {
  const { shape, axis } = shaped;
  if (shape === 'solid') return null;
  return shape === 'line' ? mirrorOfLine(axis, g.name) : mirrorOfPlaneNormal(axis);
}

/** The mirror image of an azimuth across an upright mirror plane whose horizontal line lies at axisDeg. */
export function mirrorImageDeg(azimuthDeg: number, axisDeg: number): number {
  return wrapDeg(2 * axisDeg - azimuthDeg);
}

/**
 * An azimuth relative to the centre of the reported half circle, folded into [-90, 90]: what the
 * array can tell of it (0 = the centre, +-90 = along the mirror's axis). `sideDeg` from ArrayMirror.
 */
export function foldedOffsetDeg(azimuthDeg: number, sideDeg: number): number {
  const s = wrapDeg(azimuthDeg - sideDeg);
  if (s > 90) return 180 - s;
  if (s < -90) return -180 - s;
  return s;
}

/** An azimuth on the reported side: itself, or its mirror image when it lies on the other side. */
export function reportedAzimuthDeg(azimuthDeg: number, mirror: ArrayMirror | null): number {
  if (mirror === null || mirror.sideDeg === null) return wrapDeg(azimuthDeg);
  return wrapDeg(mirror.sideDeg + foldedOffsetDeg(azimuthDeg, mirror.sideDeg));
}

/** A value that may stand for an ArrayMirror (a typed option given from outside code). */
export function isArrayMirror(v: unknown): v is ArrayMirror {
  if (typeof v !== 'object' || v === null) return false;
  const m = v as Record<string, unknown>;
  const finiteOrNull = (x: unknown) => x === null || (typeof x === 'number' && Number.isFinite(x));
  return (
    (m['kind'] === 'front-back' || m['kind'] === 'left-right' || m['kind'] === 'up-down') &&
    Array.isArray(m['normal']) &&
    m['normal'].length === 3 &&
    m['normal'].every((c) => typeof c === 'number' && Number.isFinite(c)) &&
    finiteOrNull(m['axisDeg']) &&
    finiteOrNull(m['sideDeg']) &&
    (m['axisDeg'] === null) === (m['sideDeg'] === null)
  );
}

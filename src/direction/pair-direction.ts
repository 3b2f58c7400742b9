import type { PairCorrelator } from '../dsp/gcc.js';
import type { ArrayGeometry, MicPair } from '../geometry/array-geometry.js';
import { mirrorOfLine, type ArrayMirror } from '../geometry/array-mirror.js';
import { dot, norm, sub, unitFromAzElInto, type Vec3 } from '../geometry/vec3.js';
import { LineCone } from './cone.js';
import { checkLagFitsFrame, searchLagLimit, type Direction, type DirectionModel } from './direction-model.js';

const DEG = 180 / Math.PI;

/**
 * Far-field azimuth of a two-mic pair from its delay (interface.md):
 * azimuth = -asin(c * tdoa / D), in [-90, 90]; front and back cannot be told apart.
 */
export function pairAzimuthDeg(tdoaS: number, spacingM: number, speedOfSound: number): number {
  const s = (speedOfSound * tdoaS) / spacingM;
  return -Math.asin(Math.max(-1, Math.min(1, s))) * DEG;
}

/** Delay of a far-field source at an azimuth for the pair of interface.md: tdoa = -D sin(az) / c. */
export function pairTdoaS(azimuthDeg: number, spacingM: number, speedOfSound: number): number {
  return (-spacingM * Math.sin(azimuthDeg / DEG)) / speedOfSound;
}

/**
 * The two-mic direction model: candidates are the correlation's peaks. The pair may lie along
 * any axis (within the tilt limit of src/geometry/array-mirror.ts): its delay gives the angle
 * to the axis, reported as the horizontal direction on the side the mirror convention picks.
 */
export class PairDirectionModel implements DirectionModel {
  readonly pairs: readonly MicPair[] = [[0, 1]];
  readonly curvePairs = Int32Array.of(0);
  readonly maxLag: Int32Array;
  readonly lagLimit: Float64Array;
  readonly mirror: ArrayMirror;
  private readonly spacing: number;
  /** Unit vector from mic 0 to mic 1. */
  private readonly axis: Vec3;
  /** The cone of directions a delay stands for (the axis's parts worked out once). */
  private readonly cone: LineCone;
  private readonly heights = new Float64Array(16);
  private readonly lags = new Float64Array(16);
  /** Scratch unit vector of lagsOf. */
  private readonly unit: [number, number, number] = [0, 0, 0];

  constructor(
    geometry: ArrayGeometry,
    private readonly sampleRate: number,
    private readonly speedOfSound: number,
    lagMargin: number,
    frame: number,
  ) {
    if (geometry.mics.length !== 2) throw new Error('PairDirectionModel needs exactly two mics');
    const axis = sub(geometry.mics[1]!.position, geometry.mics[0]!.position);
    this.spacing = norm(axis);
    this.axis = [axis[0] / this.spacing, axis[1] / this.spacing, axis[2] / this.spacing];
    this.mirror = mirrorOfLine(this.axis, geometry.name);
    this.cone = new LineCone(this.axis, this.mirror);
    this.maxLag = Int32Array.of(searchLagLimit(this.spacing, sampleRate, speedOfSound, lagMargin));
    this.lagLimit = Float64Array.of((this.spacing / speedOfSound) * sampleRate);
    checkLagFitsFrame(this.maxLag, frame);
  }

  findCandidates(correlators: readonly PairCorrelator[], maxCount: number, lagsOut: Float64Array, scoresOut: Float64Array): number {
    const count = correlators[0]!.peaks(Math.min(maxCount, 16), this.lags, this.heights);
    for (let c = 0; c < count; c++) {
      lagsOut[c] = this.lags[c]!;
      scoresOut[c] = this.heights[c]!;
    }
    return count;
  }

  solve(lags: Float64Array, offset: number, out: Direction): boolean {
    // tdoa = (p_0 - p_1) . u / c (interface.md), so u . axis = -c tdoa / D: the cosine of the
    // angle between the source and the axis. For the pair of interface.md (axis along +x,
    // reported side the front) this is azimuth = 90 - acos(-c tdoa / D) = -asin(c tdoa / D).
    const cosAngle = -(this.speedOfSound * lags[offset]!) / this.sampleRate / this.spacing;
    out.azimuthDeg = this.cone.azimuthDeg(cosAngle);
    out.elevationDeg = null;
    return true;
  }

  lagsOf(azimuthDeg: number, elevationDeg: number, out: Float64Array): void {
    // tdoa = (p_0 - p_1) . u / c = -D (axis . u) / c
    out[0] = (-(this.spacing * dot(this.axis, unitFromAzElInto(azimuthDeg, elevationDeg, this.unit))) / this.speedOfSound) * this.sampleRate;
  }

  prepareSubset(use: Uint8Array): number {
    return use[0] === 1 ? 0 : -1;
  }

  solveSubset(_handle: number, lags: Float64Array, out: Direction): boolean {
    // Per bin: solve() with the polynomial arc cosine.
    out.azimuthDeg = this.cone.azimuthDegFast(-(this.speedOfSound * lags[0]!) / this.sampleRate / this.spacing);
    out.elevationDeg = null;
    return true;
  }
}

import type { PairCorrelator } from '../dsp/gcc.js';
import type { ArrayGeometry, MicPair } from '../geometry/array-geometry.js';
import { norm, sub, wrapDeg } from '../geometry/vec3.js';
import { searchLagLimit, type Direction, type DirectionModel } from './direction-model.js';

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

/** The two-mic direction model: candidates are the correlation's peaks. */
export class PairDirectionModel implements DirectionModel {
  readonly pairs: readonly MicPair[] = [[0, 1]];
  readonly maxLag: Int32Array;
  readonly mirror = 'front-back' as const;
  private readonly spacing: number;
  /** Azimuth of the pair's axis (mic 0 towards mic 1), degrees; 90 for the pair of interface.md. */
  private readonly axisAzimuthDeg: number;
  private readonly heights = new Float64Array(16);
  private readonly lags = new Float64Array(16);

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
    this.axisAzimuthDeg = Math.atan2(axis[0], axis[1]) * DEG;
    this.maxLag = Int32Array.of(searchLagLimit(this.spacing, sampleRate, speedOfSound, lagMargin, frame));
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
    // The angle between the pair's axis and the source is acos(-c tdoa / D); of the two mirror
    // directions the one in front of the axis (counter-clockwise side) is reported, which for
    // the pair of interface.md (axis along +x) is exactly -asin(c tdoa / D).
    const az = pairAzimuthDeg(lags[offset]! / this.sampleRate, this.spacing, this.speedOfSound);
    out.azimuthDeg = wrapDeg(this.axisAzimuthDeg - 90 + az);
    out.elevationDeg = null;
    return true;
  }
}

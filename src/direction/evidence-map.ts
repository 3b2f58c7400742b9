/**
 * Pictures of a hop's evidence, for the live view: each pair's correlation over its
 * physically possible lags (the delay map), and the steered response over azimuth (and, for
 * arrays that span height, a few elevations): the mean over pairs of each pair's correlation
 * at the delay a far source in that direction would give, tdoa = (p_a - p_b) . u / c
 * (interface.md; the SRP-PHAT sum). Downsampled to what a screen needs. Pure and synchronous;
 * buffers and steering delays are computed once per stream; nothing runs unless asked.
 */
import type { ArrayGeometry, MicPair } from '../geometry/array-geometry.js';
import { dot, sub, unitFromAzEl } from '../geometry/vec3.js';

/** Most points per pair in the delay map (wider pairs are max-pooled into this many). */
export const MAX_LAG_POINTS = 64;
/** Width of an azimuth cell of the direction map, degrees. */
export const AZIMUTH_STEP_DEG = 2;
/** Elevation rows for arrays that span height; a flat array gets the horizontal row only. */
const ELEVATIONS_3D = [-60, -40, -20, 0, 20, 40, 60, 80];

/** The correlation of one pair at an integer lag in samples (dsp/gcc.ts PairCorrelator.at). */
export interface LagCorrelation {
  at(lag: number): number;
}

export interface PairDelayMap {
  pair: [number, number];
  /** Lag of values[0] and the step between values, seconds (a lag is b's arrival minus a's, as tdoa_s). */
  first_lag_s: number;
  lag_step_s: number;
  /** Correlation per lag, divided by the largest over all pairs of the hop. */
  values: number[];
}

export interface DirectionMap {
  /** Centre azimuth of the first cell and the cell width, degrees. */
  azimuth_first_deg: number;
  azimuth_step_deg: number;
  elevation_deg: number[];
  /** One row per elevation: the steered response, scaled to [0, 1] over the map (0 weakest, 1 strongest). */
  values: number[][];
}

export interface EvidenceMaps {
  delay_map: PairDelayMap[];
  direction_map: DirectionMap;
}

function round3(v: number): number {
  return Math.round(v * 1000) / 1000;
}

export class EvidenceMapper {
  private readonly lo: Int32Array;
  private readonly pool: Int32Array;
  private readonly points: Int32Array;
  private readonly pairRaw: Float64Array[];
  readonly elevations: number[];
  private readonly cells: number;
  /** Per (elevation, azimuth cell, pair): the steering delay in samples. */
  private readonly steer: Float64Array;
  private readonly response: Float64Array;

  constructor(
    geometry: ArrayGeometry,
    readonly pairs: readonly MicPair[],
    readonly sampleRate: number,
    speedOfSound: number,
    /** Largest lag each pair's correlation holds, samples (the analysis' search limit). */
    maxLag: ArrayLike<number>,
  ) {
    const P = pairs.length;
    this.lo = new Int32Array(P);
    this.pool = new Int32Array(P);
    this.points = new Int32Array(P);
    const zs = geometry.mics.map((m) => m.position[2]);
    this.elevations = Math.max(...zs) - Math.min(...zs) > 0.005 ? ELEVATIONS_3D : [0];
    this.cells = Math.round(360 / AZIMUTH_STEP_DEG);
    this.steer = new Float64Array(this.elevations.length * this.cells * P);
    this.response = new Float64Array(this.elevations.length * this.cells);
    const d = pairs.map(([a, b]) => sub(geometry.mics[a]!.position, geometry.mics[b]!.position));
    pairs.forEach((_, p) => {
      const physical = Math.hypot(...d[p]!) / speedOfSound * sampleRate;
      const reach = Math.min(maxLag[p]!, Math.ceil(physical));
      const span = 2 * reach + 1;
      const pool = Math.ceil(span / MAX_LAG_POINTS);
      this.pool[p] = pool;
      this.points[p] = Math.ceil(span / pool);
      this.lo[p] = -reach;
    });
    this.pairRaw = pairs.map((_, p) => new Float64Array(this.points[p]!));
    this.elevations.forEach((el, e) => {
      for (let i = 0; i < this.cells; i++) {
        const u = unitFromAzEl(-180 + (i + 0.5) * AZIMUTH_STEP_DEG, el);
        for (let p = 0; p < P; p++) this.steer[(e * this.cells + i) * P + p] = (dot(d[p]!, u) / speedOfSound) * sampleRate;
      }
    });
  }

  private static interp(c: LagCorrelation, lag: number): number {
    const i = Math.floor(lag);
    const f = lag - i;
    return (1 - f) * c.at(i) + f * c.at(i + 1);
  }

  /** The maps of the hop whose correlations `corr` hold (one per pair, in `pairs` order). */
  build(corr: readonly LagCorrelation[]): EvidenceMaps {
    const P = this.pairs.length;
    let top = 1e-12;
    for (let p = 0; p < P; p++) {
      const raw = this.pairRaw[p]!;
      const pool = this.pool[p]!;
      const hi = -this.lo[p]!;
      for (let k = 0; k < raw.length; k++) {
        let m = -Infinity;
        for (let j = 0; j < pool; j++) {
          const lag = this.lo[p]! + k * pool + j;
          if (lag > hi) break;
          m = Math.max(m, corr[p]!.at(lag));
        }
        raw[k] = m;
        top = Math.max(top, Math.abs(m));
      }
    }
    const delay_map: PairDelayMap[] = this.pairs.map(([a, b], p) => {
      const pool = this.pool[p]!;
      // A pooled point stands at the middle of the lags it pools.
      const first = this.lo[p]! + (pool - 1) / 2;
      return {
        pair: [a, b],
        first_lag_s: first / this.sampleRate,
        lag_step_s: pool / this.sampleRate,
        values: Array.from(this.pairRaw[p]!, (v) => round3(v / top)),
      };
    });
    let lo = Infinity;
    let hi = -Infinity;
    for (let c = 0; c < this.response.length; c++) {
      let s = 0;
      for (let p = 0; p < P; p++) s += EvidenceMapper.interp(corr[p]!, this.steer[c * P + p]!);
      s /= P;
      this.response[c] = s;
      lo = Math.min(lo, s);
      hi = Math.max(hi, s);
    }
    const range = hi - lo > 1e-12 ? hi - lo : 1;
    const values = this.elevations.map((_, e) => Array.from(this.response.subarray(e * this.cells, (e + 1) * this.cells), (v) => round3((v - lo) / range)));
    return {
      delay_map,
      direction_map: { azimuth_first_deg: -180 + AZIMUTH_STEP_DEG / 2, azimuth_step_deg: AZIMUTH_STEP_DEG, elevation_deg: [...this.elevations], values },
    };
  }
}

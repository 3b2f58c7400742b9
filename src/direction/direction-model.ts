import type { PairCorrelator } from '../dsp/gcc.js';
import type { MicPair } from '../geometry/array-geometry.js';
import type { ArrayMirror } from '../geometry/array-mirror.js';

/** A direction in the array frame (interface.md): degrees; elevation null when unresolvable. */
export interface Direction {
  azimuthDeg: number;
  elevationDeg: number | null;
}

/**
 * How an array turns pair correlations into direction candidates and refined per-pair lags
 * into a direction. A pair (src/direction/pair-direction.ts) and a search over directions for
 * 3 to 8 mics (src/direction/srp-search.ts) implement it.
 */
export interface DirectionModel {
  readonly pairs: readonly MicPair[];
  /** Largest lag searched per pair, whole samples (physical limit plus margin). */
  readonly maxLag: Int32Array;
  /** The mirror ambiguity the array carries (src/geometry/array-mirror.ts), null for a solid array. */
  readonly mirror: ArrayMirror | null;
  /** The pairs whose correlation curves (PairCorrelator.gcc) findCandidates reads, ascending: the analysis computes only these each hop. */
  readonly curvePairs: Int32Array;
  /**
   * Candidates from this hop's correlations, best first: writes candidate c's lag for pair p
   * to lagsOut[c * pairs + p] (samples) and its score to scoresOut[c]; returns the count.
   */
  findCandidates(correlators: readonly PairCorrelator[], maxCount: number, lagsOut: Float64Array, scoresOut: Float64Array): number;
  /** Direction from per-pair lags (samples); returns false when the lags fit no direction. */
  solve(lags: Float64Array, offset: number, out: Direction): boolean;
  /** The other way: each pair's lag (samples) for a source at azimuth and elevation (degrees), written to out. */
  lagsOf(azimuthDeg: number, elevationDeg: number, out: Float64Array): void;
  /**
   * Physical lag limit of each pair, samples (spacing / c x rate). A frequency bin k of an
   * n-sample frame gives a pair's delay from its phase alone while the limit is below n / (2k).
   */
  readonly lagLimit: Float64Array;
  /**
   * Prepare the least squares for the direction from the lags of the pairs marked 1 in `use`
   * only (set-up time); returns a handle for solveSubset, or -1 when those pairs do not span the
   * array's directions.
   */
  prepareSubset(use: Uint8Array): number;
  /** Direction from the lags of a prepared subset's pairs (the others' lags are not read); false when they fit none. */
  solveSubset(handle: number, lags: Float64Array, out: Direction): boolean;
}

/**
 * Largest lag searched for a pair (whole samples): the physical limit spacing / c, plus the
 * margin, plus one sample for the peak's neighbour. The frame must hold it with room to spare:
 * see minimumFrame (src/analysis/analysis-options.ts), which sizes or checks the frame.
 */
export function searchLagLimit(spacingM: number, sampleRate: number, speedOfSound: number, lagMargin: number): number {
  return Math.ceil((spacingM / speedOfSound) * sampleRate * (1 + lagMargin)) + 1;
}

/**
 * Guard: a model's lag window must fit well inside the frame (the analysis options size or
 * check the frame before models are built, so this failing is a programming error).
 */
export function checkLagFitsFrame(maxLag: Int32Array, frame: number): void {
  for (const lag of maxLag) {
    if (lag > frame / 2 - 2) throw new Error(`lag window of ${lag} samples does not fit a ${frame}-sample frame (size the frame with minimumFrame)`);
  }
}

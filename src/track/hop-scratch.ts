/**
 * The current hop as plain numbers in typed arrays, shared by the tracker's parts. Doubles
 * cross method boundaries through these arrays, not as arguments or return values: V8 boxes
 * a double passed to or returned from a call it did not inline (a small heap allocation), and
 * the tracker promises none per hop. Methods take slot and candidate indices (small integers).
 */
export const TIME = 0;
export const LEVEL = 1;
export const ONSET = 2;
export const CONFIDENCE = 3;
export const BAND_LO = 4;
export const BAND_HI = 5;
/** Hop duration estimate, seconds (the last positive time step). */
export const HOP_S = 6;
/** Time since the previous hop, seconds (0 on the first). */
export const DT = 7;
/** SNR of the hop over the noise floor, dB. */
export const SNR = 8;
/** The hop's own coherence with its answer, in standard deviations of incoherent noise's (Infinity when unknown). */
export const FRESH_Z = 9;

/** Floor of hop confidence x candidate score when it serves as a weight. */
export const MIN_WEIGHT = 1e-6;

export class HopScratch {
  readonly hop = new Float64Array(10);
  /**
   * The candidate's azimuth, degrees; on an array whose mirror flips azimuth, its offset from
   * the centre of the reported half circle, folded into [-90, 90] (foldedOffsetDeg).
   */
  readonly candAz: Float64Array;
  /** NaN where the candidate has no elevation. */
  readonly candEl: Float64Array;
  readonly candScore: Float64Array;
  /** log2 of the candidate's centre frequency (Hz); NaN when unknown. */
  readonly candLogHz: Float64Array;
  /** Measurement variance of the candidate's angles, deg^2. */
  readonly candR: Float64Array;

  constructor(maxCandidates: number) {
    this.candAz = new Float64Array(maxCandidates);
    this.candEl = new Float64Array(maxCandidates);
    this.candScore = new Float64Array(maxCandidates);
    this.candLogHz = new Float64Array(maxCandidates);
    this.candR = new Float64Array(maxCandidates);
  }
}

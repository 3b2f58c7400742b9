/**
 * What `confidence` means: the estimated probability that the hop's direction lies within
 * 5 degrees of the true direction of a source that is sounding (on arrays with a mirror, of
 * the source or its mirror image). It is a logistic function of three measurable features of
 * the hop:
 *   agree = F_win / E      the share of the hop's band evidence that agrees with the winner
 *   share = F_win / sum F  the winner's share of the fused scores of all candidates
 *   snr   = the hop's SNR over the noise floor, dB (the best band's)
 * confidence = 1 / (1 + exp(-(b0 + b1 agree + b2 share + b3 min(snr, 40) / 10))).
 *
 * The coefficients were fitted by logistic regression on the `tune` half of the generated
 * accuracy corpus (test/bench/matrix/, `npm run bench accuracy -- --fit`) and checked on
 * the held-apart `check` half; the README shows the reliability table.
 */
export interface ConfidenceFeatures {
  agree: number;
  share: number;
  snrDb: number;
  /** Total band evidence of the hop. */
  evidence: number;
  /** Wavelengths across the array at the winner's mean frequency. */
  apertureWaves: number;
}

export const CONFIDENCE_COEFFICIENTS = {
  b0: -4,
  agree: 5,
  share: 2,
  snr: 0.8,
} as const;

export function confidenceOf(f: ConfidenceFeatures): number {
  const k = CONFIDENCE_COEFFICIENTS;
  const z = k.b0 + k.agree * f.agree + k.share * f.share + (k.snr * Math.min(f.snrDb, 40)) / 10;
  return 1 / (1 + Math.exp(-z));
}

/**
 * What `confidence` means: the estimated probability that the hop's direction lies within
 * 5 degrees of the true direction of a source that is sounding (on arrays with a mirror, of
 * the source or its mirror image). It is a logistic function of measurable features of the
 * hop (see ConfidenceFeatures):
 *   confidence = 1 / (1 + exp(-(b0 + b1 agree + b2 share + b3 min(snr, 40 dB) / 10
 *                                 + b4 ln(evidence + 0.01) + b5 ln(waves + 0.05) + b6 onset)))
 *
 * The coefficients were fitted by logistic regression on the `tune` half of the generated
 * accuracy corpus (test/bench/matrix/, every hop that had a candidate) and checked on the
 * held-apart `check` half; the README shows the reliability table. Refit after a change to
 * the analysis:
 *   npx tsx test/bench/accuracy-matrix.ts --set analysis.minConfidence=0 --hops /tmp/hops.jsonl
 *   python3 test/bench/matrix/fit_confidence.py /tmp/hops.jsonl
 */
export interface ConfidenceFeatures {
  /** Share of the hop's band evidence that supports the winner, [0, 1]. */
  agree: number;
  /** The winner's share of the fused scores of all candidates, [0, 1]. */
  share: number;
  /** SNR of the hop over the noise floor, dB (its best band). */
  snrDb: number;
  /** Total band evidence of the hop. */
  evidence: number;
  /** Wavelengths across the array at the winner's mean frequency. */
  apertureWaves: number;
  /** Onset strength of the hop, [0, 1]. */
  onset: number;
}

export const CONFIDENCE_COEFFICIENTS = {
  b0: -0.5472,
  agree: 3.3469,
  share: 1.0128,
  snr: 0.7231,
  logEvidence: -1.3554,
  logWaves: 0.2588,
  onset: -1.2114,
} as const;

export function confidenceOf(f: ConfidenceFeatures): number {
  const k = CONFIDENCE_COEFFICIENTS;
  const z =
    k.b0 +
    k.agree * f.agree +
    k.share * f.share +
    (k.snr * Math.min(f.snrDb, 40)) / 10 +
    k.logEvidence * Math.log(f.evidence + 0.01) +
    k.logWaves * Math.log(f.apertureWaves + 0.05) +
    k.onset * f.onset;
  return 1 / (1 + Math.exp(-z));
}

/**
 * What `confidence` means: the estimated probability that the hop's direction lies within
 * 5 degrees of the true direction of a source that is sounding (on arrays with a mirror, of
 * the source or its mirror image). It is a logistic function of measurable features of the
 * hop (see ConfidenceFeatures):
 *   confidence = 1 / (1 + exp(-z)),  with s = min(snr, 40 dB) / 10 and
 *   z = b0 + b1 agree + b2 ln(agree + 0.01) + b3 share + b4 s + b5 s agree
 *       + b6 ln(evidence + 0.01) + b7 ln(waves + 0.05) + b8 onset
 *
 * then mapped through a monotone calibration (CALIBRATION_KNOTS). The coefficients were fitted
 * by logistic regression, and the knots by isotonic regression, on the `tune` half of the
 * generated accuracy corpus (test/bench/matrix/, every hop that had a candidate) and checked
 * on the held-apart `check` half; the README shows the reliability table. Refit after a change to
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
  b0: 3.7971,
  agree: 0.2711,
  logAgree: 1.1522,
  share: 0.9291,
  snr: 0.8322,
  snrTimesAgree: -0.2573,
  logEvidence: -2.1643,
  logWaves: 0.1561,
  onset: -1.0675,
} as const;

export function confidenceOf(f: ConfidenceFeatures): number {
  const k = CONFIDENCE_COEFFICIENTS;
  const snr = Math.min(f.snrDb, 40) / 10;
  const z =
    k.b0 +
    k.agree * f.agree +
    k.logAgree * Math.log(f.agree + 0.01) +
    k.share * f.share +
    k.snr * snr +
    k.snrTimesAgree * snr * f.agree +
    k.logEvidence * Math.log(f.evidence + 0.01) +
    k.logWaves * Math.log(f.apertureWaves + 0.05) +
    k.onset * f.onset;
  return calibrate(1 / (1 + Math.exp(-z)));
}

/**
 * The logistic output mapped onto the observed share within 5 degrees: a monotone,
 * piecewise-linear map (pool-adjacent-violators over 20 equal-count bins of the tune half),
 * as [logistic output, probability] knots.
 */
export const CALIBRATION_KNOTS: readonly (readonly [number, number])[] = [
  [0.0, 0.0], [0.0694, 0.1745], [0.1466, 0.1885], [0.2138, 0.2583], [0.2913, 0.3365], [0.3951, 0.3528],
  [0.5828, 0.4868], [0.7012, 0.4899], [0.744, 0.6115], [0.7846, 0.7765], [0.8229, 0.884], [0.8553, 0.9482],
  [0.8802, 0.951], [0.9005, 0.9769], [0.9193, 0.9769], [0.9562, 0.9779], [1.0, 1.0],
];

function calibrate(p: number): number {
  const k = CALIBRATION_KNOTS;
  for (let i = 1; i < k.length; i++) {
    const [x1, y1] = k[i]!;
    if (p <= x1) {
      const [x0, y0] = k[i - 1]!;
      return x1 > x0 ? y0 + ((y1 - y0) * (p - x0)) / (x1 - x0) : y1;
    }
  }
  return 1;
}

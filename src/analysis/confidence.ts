/**
 * What `confidence` means: the estimated probability that the hop's direction lies within
 * 5 degrees of the true direction of a source that is sounding (on arrays with a mirror, of
 * the source or its mirror image).
 *
 * It is a logistic function of measurable features of the hop (ConfidenceFeatures, turned
 * into the terms of confidenceTerms), mapped through a monotone calibration
 * (CALIBRATION_KNOTS). The coefficients were fitted by logistic regression, and the knots by
 * isotonic regression, on the `tune` half of the generated accuracy corpus (test/bench/matrix/,
 * every hop that had a candidate) and checked on the held-apart `check` half; the README shows
 * the reliability table. Refit after a change to the analysis (the script prints this file's
 * two tables; its feature list must match confidenceTerms):
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
  /** This hop's own coherence with the winner's lags, [0, 1] (no memory). */
  fresh: number;
}

/**
 * The terms of the logistic, in the order of CONFIDENCE_COEFFICIENTS (after its intercept):
 * agree, ln(agree + 0.01), share, s, s agree, ln(evidence + 0.01), ln(waves + 0.05), onset,
 * fresh, fresh s; with s = min(snr, 40 dB) / 10.
 */
export function confidenceTerms(f: ConfidenceFeatures, out: Float64Array): void {
  const s = Math.min(f.snrDb, 40) / 10;
  out[0] = f.agree;
  out[1] = Math.log(f.agree + 0.01);
  out[2] = f.share;
  out[3] = s;
  out[4] = s * f.agree;
  out[5] = Math.log(f.evidence + 0.01);
  out[6] = Math.log(f.apertureWaves + 0.05);
  out[7] = f.onset;
  out[8] = f.fresh;
  out[9] = f.fresh * s;
}

// FITTED-BEGIN (written by test/bench/matrix/fit_confidence.py)
export const CONFIDENCE_COEFFICIENTS: readonly number[] = [2.0432, -0.6404, 0.3192, -1.0472, -0.2153, 6.3695, -0.4358, 0.4861, 0.8744, 1.0381, -0.4590];
export const CALIBRATION_KNOTS: readonly (readonly [number, number])[] = [[0.0, 0.0], [0.1015, 0.1545], [0.1664, 0.2036], [0.2142, 0.2312], [0.2609, 0.2634], [0.3135, 0.2685], [0.3812, 0.3158], [0.483, 0.4557], [0.6255, 0.6035], [0.7729, 0.7699], [0.8835, 0.9024], [0.9475, 0.9741], [0.9787, 0.9859], [0.9918, 0.9938], [0.9965, 0.9966], [0.9984, 0.9977], [0.9993, 0.9989], [0.9997, 0.9994], [0.9999, 0.9997], [1.0, 1.0], [1.0, 1.0]];
// FITTED-END

const terms = new Float64Array(16);

export function confidenceOf(f: ConfidenceFeatures): number {
  confidenceTerms(f, terms);
  const k = CONFIDENCE_COEFFICIENTS;
  let z = k[0]!;
  for (let i = 1; i < k.length; i++) z += k[i]! * terms[i - 1]!;
  return calibrate(1 / (1 + Math.exp(-z)));
}

/** The logistic output mapped onto the observed share within 5 degrees (piecewise linear between the knots). */
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

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
export const CONFIDENCE_COEFFICIENTS: readonly number[] = [2.0676, -0.3594, 0.3276, -1.1366, -0.2009, 6.3184, -0.4345, 0.5078, 0.9204, 1.0225, -0.4347];
export const CALIBRATION_KNOTS: readonly (readonly [number, number])[] = [[0.0, 0.0], [0.0961, 0.1377], [0.1576, 0.193], [0.2039, 0.2218], [0.2766, 0.2593], [0.3728, 0.3138], [0.4807, 0.4594], [0.6287, 0.5954], [0.7768, 0.7754], [0.8866, 0.9108], [0.9492, 0.9752], [0.9794, 0.9859], [0.9921, 0.9921], [0.9966, 0.9966], [0.9984, 0.9977], [0.9993, 0.9989], [0.9997, 0.9994], [1.0, 0.9997], [1.0, 1.0], [1.0, 1.0]];
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

/**
 * Evidence-weighted band fusion: how the frequency bands of one hop decide between the
 * direction candidates.
 *
 * Every band b carries an evidence weight e_b >= 0 (how much direction-bearing sound it holds
 * this hop; the analyzer sets it from the band's SNR over its own noise floor and its width,
 * see hop-analyzer.ts) and, for each candidate c, a normalised PHAT coherence s_bc in [-1, 1]
 * (1: every weighted bin of the band agrees exactly with the candidate's lags). Each band supports the
 * candidate it scores best (when that score reaches MIN_SUPPORT), in proportion to its margin
 * over the runner-up (full at FULL_SUPPORT_MARGIN), and the fused score of a candidate is the
 * evidence of the bands that support it, weighted by their coherence and margin:
 *   F_c = sum over bands b supporting c of e_b * s_bc * min(1, (s_bc - max(0, s_b,next)) / margin)
 * so a strong call in two bands outweighs a weak coherent rumble in five, while a band cannot
 * add more than its own evidence: a narrow-band interferer holds few bands' evidence, and an
 * aliased band supports its true and aliased lags alike, so it cannot choose between them.
 * A direction between two sources, which every band finds partly coherent but none best,
 * gathers nothing. The supporting bands refine the winner's lags and name the band range its
 * delay stands for.
 *
 * Pure: arrays in, arrays out, no allocation per call.
 */

/** A band supports its best candidate only when that coherence reaches this. */
export const MIN_SUPPORT = 0.2;
/** Margin of the best coherence over the runner-up at which a band gives its full support. */
export const FULL_SUPPORT_MARGIN = 0.1;

export interface FusionResult {
  /** Fused score per candidate. */
  readonly fused: Float64Array;
  /** Per band: the candidate it supports (-1 none) and the evidence it gives that candidate. */
  readonly supportOf: Int32Array;
  readonly supportWeight: Float64Array;
  /** Sum of all band evidence this hop. */
  totalEvidence: number;
}

export class BandFusion {
  readonly result: FusionResult;

  constructor(
    readonly bandCount: number,
    readonly maxCandidates: number,
  ) {
    this.result = {
      fused: new Float64Array(maxCandidates),
      supportOf: new Int32Array(bandCount),
      supportWeight: new Float64Array(bandCount),
      totalEvidence: 0,
    };
  }

  /**
   * Fuse K candidates. `coherence[b * maxCandidates + c]` = s_bc, `evidence[b]` = e_b.
   */
  fuse(K: number, coherence: Float64Array, evidence: Float64Array): FusionResult {
    const r = this.result;
    const S = this.maxCandidates;
    r.fused.fill(0);
    r.supportOf.fill(-1);
    r.supportWeight.fill(0);
    let total = 0;
    for (let b = 0; b < this.bandCount; b++) {
      const e = evidence[b]!;
      if (!(e > 0)) continue;
      total += e;
      let best = -1;
      let bestS = -Infinity;
      let second = 0;
      for (let c = 0; c < K; c++) {
        const s = coherence[b * S + c]!;
        if (s > bestS) {
          second = Math.max(second, bestS);
          bestS = s;
          best = c;
        } else if (s > second) second = s;
      }
      if (best < 0 || bestS < MIN_SUPPORT) continue;
      const w = e * bestS * Math.min(1, (bestS - second) / FULL_SUPPORT_MARGIN);
      if (!(w > 0)) continue;
      r.supportOf[b] = best;
      r.supportWeight[b] = w;
      r.fused[best] = r.fused[best]! + w;
    }
    r.totalEvidence = total;
    return r;
  }
}

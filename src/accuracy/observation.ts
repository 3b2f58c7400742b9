/**
 * How much signal one hop's delay estimate draws on, for the Cramer-Rao bound's T.
 *
 * Without memory a hop sees one frame. With the evidence memory (time constant memoryS) the
 * cross-spectrum is an exponentially weighted sum over hops, weights m^k with
 * m = exp(-hop / memoryS); such a sum has the variance of an unweighted mean over
 * (sum w)^2 / sum w^2 = (1 + m) / (1 - m) hops (Kish's effective sample size, from memory),
 * each hop bringing hop / fs seconds of new signal. T is the larger of the two.
 */
export function effectiveObservationS(frame: number, hop: number, memoryS: number, sampleRate: number): number {
  const frameS = frame / sampleRate;
  if (!(memoryS > 0)) return frameS;
  const hopS = hop / sampleRate;
  const m = Math.exp(-hopS / memoryS);
  return Math.max(frameS, (hopS * (1 + m)) / (1 - m));
}

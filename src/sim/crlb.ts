/**
 * The Cramer-Rao lower bound for estimating the delay between two mics, after C. H. Knapp
 * and G. C. Carter, "The generalized correlation method for estimation of time delay",
 * IEEE Trans. ASSP 24(4), 320-327, 1976:
 *
 *   var(tau) >= 1 / ( 2T * integral from 0 to infinity of (2 pi f)^2 C(f) / (1 - C(f)) df )
 *
 * with T the observation time and C the magnitude-squared coherence between the mics. The
 * factor 2T with a one-sided integral was recalled from memory; it also follows from the
 * Fisher information of one complex Gaussian frequency bin, 2 (2 pi f)^2 C / (1 - C), summed
 * over bins spaced 1 / T. test/sim/crlb.test.ts confirms it by Monte-Carlo.
 */

/** Coherence of two mics hearing a common signal of PSD S in independent noises of PSD N each, at snr = S / N. */
export function coherenceAtSnr(snr: number): number {
  return (snr / (1 + snr)) ** 2;
}

/**
 * The bound (s^2) for a coherence given on a grid of frequencies (Hz, ascending),
 * integrated by the trapezoid rule.
 */
export function delayCrlb(observationS: number, freqsHz: ArrayLike<number>, coherence: ArrayLike<number>): number {
  if (!(observationS > 0)) throw new RangeError('observation time must be positive');
  if (freqsHz.length !== coherence.length || freqsHz.length < 2) throw new RangeError('need matching frequency and coherence grids of 2 or more points');
  const term = (k: number): number => {
    const c = Math.min(coherence[k]!, 1 - 1e-15);
    const w = 2 * Math.PI * freqsHz[k]!;
    return (w * w * c) / (1 - c);
  };
  let integral = 0;
  for (let k = 1; k < freqsHz.length; k++) integral += 0.5 * (term(k - 1) + term(k)) * (freqsHz[k]! - freqsHz[k - 1]!);
  return 1 / (2 * observationS * integral);
}

/** The bound in closed form for white signal and noise at `snr` (per mic) over [lowHz, highHz]. */
export function whiteNoiseDelayCrlb(observationS: number, lowHz: number, highHz: number, snr: number): number {
  const ratio = (snr * snr) / (1 + 2 * snr); // C / (1 - C) for C = (snr / (1 + snr))^2
  const integral = ((2 * Math.PI) ** 2 * (highHz ** 3 - lowHz ** 3) * ratio) / 3;
  return 1 / (2 * observationS * integral);
}

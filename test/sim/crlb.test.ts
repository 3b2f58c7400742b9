import { describe, expect, it } from 'vitest';
import { coherenceAtSnr, delayCrlb, whiteNoiseDelayCrlb } from '../../src/sim/crlb.js';
import { Fft } from '../../src/sim/fft.js';
import { makeRng } from '../../src/sim/rng.js';

/**
 * Monte-Carlo check of the Knapp-Carter bound (IEEE Trans. ASSP 24(4), 1976; its factor was
 * recalled from memory): white noise delayed by a known fraction of a sample in white noise
 * at a known SNR, delay estimated by maximum likelihood (for white signal and noise that is
 * the peak of the plain cross-correlation; located here by Newton steps on the exact
 * frequency-domain correlation, written in this test). At high SNR the ML estimate attains
 * the bound, so the measured variance over the bound should be 1.
 */
function monteCarloRatio(snr: number, trials: number, seed: number): number {
  const n = 2048;
  const fs = 48000;
  const trueDelay = 0.37 / fs;
  const fft = new Fft(n);
  const rng = makeRng(seed);
  const x = new Float64Array(n);
  const s = fft.complex();
  const spec1 = fft.complex();
  const spec2 = fft.complex();
  const tmp = fft.complex();
  const sig2 = new Float64Array(n);
  const noiseStd = 1 / Math.sqrt(snr);
  const errors: number[] = [];
  for (let trial = 0; trial < trials; trial++) {
    for (let i = 0; i < n; i++) x[i] = rng.gaussian();
    fft.forwardReal(x, s);
    // Delayed copy: multiply by exp(-i w D) (circular, exact), Nyquist bin dropped from both.
    s[n] = 0;
    s[n + 1] = 0;
    for (let k = 0; k < n; k++) {
      const kk = k <= n / 2 ? k : k - n;
      const w = (2 * Math.PI * kk * fs) / n;
      const c = Math.cos(w * trueDelay);
      const si = -Math.sin(w * trueDelay);
      tmp[2 * k] = s[2 * k]! * c - s[2 * k + 1]! * si;
      tmp[2 * k + 1] = s[2 * k]! * si + s[2 * k + 1]! * c;
    }
    const out = fft.complex();
    fft.inverse(tmp, out);
    for (let i = 0; i < n; i++) sig2[i] = out[2 * i]! + noiseStd * rng.gaussian();
    fft.inverse(s, out);
    for (let i = 0; i < n; i++) x[i] = out[2 * i]! + noiseStd * rng.gaussian();
    fft.forwardReal(x, spec1);
    fft.forwardReal(sig2, spec2);
    // G[k] = X2 conj(X1); J(d) = sum over positive bins of Re(G e^{i w d}), maximised at d = D.
    let d = 0;
    for (let it = 0; it < 6; it++) {
      let j1 = 0;
      let j2 = 0;
      for (let k = 1; k < n / 2; k++) {
        const gr = spec2[2 * k]! * spec1[2 * k]! + spec2[2 * k + 1]! * spec1[2 * k + 1]!;
        const gi = spec2[2 * k + 1]! * spec1[2 * k]! - spec2[2 * k]! * spec1[2 * k + 1]!;
        const w = (2 * Math.PI * k * fs) / n;
        const c = Math.cos(w * d);
        const si = Math.sin(w * d);
        const re = gr * c - gi * si;
        const im = gr * si + gi * c;
        j1 += -w * im;
        j2 += -w * w * re;
      }
      d -= j1 / j2;
    }
    errors.push(d - trueDelay);
  }
  const mean = errors.reduce((a, b) => a + b, 0) / trials;
  const variance = errors.reduce((a, b) => a + (b - mean) ** 2, 0) / (trials - 1);
  const bound = whiteNoiseDelayCrlb(n / fs, 0, fs / 2, snr);
  return variance / bound;
}

describe('Cramer-Rao bound for delay (Knapp and Carter 1976)', () => {
  it('closed form for white noise equals the integral with C = S^2 / (S + N)^2', () => {
    const snr = 3;
    const freqs = Array.from({ length: 2001 }, (_, k) => 500 + k * 5);
    const coh = freqs.map(() => coherenceAtSnr(snr));
    // S = 3, N = 1: C = 9 / 16 (definition of the coherence for a common signal in independent noise).
    expect(coherenceAtSnr(snr)).toBeCloseTo(9 / 16, 12);
    expect(delayCrlb(0.1, freqs, coh) / whiteNoiseDelayCrlb(0.1, 500, 10500, snr)).toBeCloseTo(1, 6);
  });

  it('Monte-Carlo: ML delay variance of white noise in white noise at 20 dB SNR meets the bound (ratio 1 +- 0.15)', () => {
    const ratio = monteCarloRatio(100, 1200, 11);
    console.log(`CRLB Monte-Carlo, SNR 20 dB, 1200 trials: variance / bound = ${ratio.toFixed(3)}`);
    expect(ratio).toBeGreaterThan(0.85);
    expect(ratio).toBeLessThan(1.15);
  });

  it('Monte-Carlo at 0 dB SNR: still at the bound for a long observation (ratio 1 +- 0.15)', () => {
    const ratio = monteCarloRatio(1, 1200, 12);
    console.log(`CRLB Monte-Carlo, SNR 0 dB, 1200 trials: variance / bound = ${ratio.toFixed(3)}`);
    expect(ratio).toBeGreaterThan(0.85);
    expect(ratio).toBeLessThan(1.15);
  });
});

import { describe, expect, it } from 'vitest';
import { makeBands } from '../../src/dsp/bands.js';
import { addBandScores, coherenceSum, PairCorrelator, refineLag } from '../../src/dsp/gcc.js';
import { addBandScoresLanes, hopCoherenceF32, hopCoherenceLanes, magnitudes, refineLagLanes, setPhasorsF32, unitLayout } from '../../src/dsp/gcc-lanes.js';

/**
 * The interleaved kernels (src/dsp/gcc-lanes.ts) must give the single kernels' results to the
 * last bit: the single kernels are what the accuracy tests (numpy, sox, the Cramer-Rao bound)
 * check, and the analysis promises the same outputs whichever runs. A cross-spectrum of a
 * plane wave at a known lag plus noise (common practice, no source) exercises every lane.
 */
function seeded(seed: number): () => number {
  let s = seed;
  return () => ((s = (s * 1664525 + 1013904223) >>> 0) / 2 ** 32) - 0.5;
}

function correlator(n: number, maxLag: number, lag: number, rand: () => number): PairCorrelator {
  const pc = new PairCorrelator(n, maxLag);
  for (let k = 0; k <= n / 2; k++) {
    const ph = (-2 * Math.PI * k * lag) / n;
    pc.accRe[k] = Math.cos(ph) + 0.4 * rand();
    pc.accIm[k] = Math.sin(ph) + 0.4 * rand();
  }
  return pc;
}

describe('interleaved GCC kernels give the single kernels results (bit for bit, band scores within float32 rounding)', () => {
  const n = 1024;
  const bands = makeBands(n, 48000, 150, 12000, 8);
  const rand = seeded(11);
  const pcs = [-7.3, -2.1, 0.4, 3.8, 6.6].map((lag) => correlator(n, 24, lag, rand));
  const lags = Float64Array.from([-7, -2, 0.5, 4, 6.5, 1.25, -3.5]);

  it.each([1, 2, 3, 4, 5, 7])('band scores of %i candidates in float32, with and without bands left out', (count) => {
    // The band-score lanes run in float32 (addBandScoresLanes' doc): against the double-precision
    // single kernel, each band's sum agrees within 1e-5 of the band's bin count (the terms are of
    // order 1 here; float32 keeps 24 bits, and a band holds at most a few dozen bins).
    for (const needed of [null, Float64Array.from([1, 0, 2, 0.5, 0, 1, 1, 3])]) {
      const single = new Float64Array(8 * 8);
      const lanes = new Float64Array(8 * 8);
      addBandScoresLanes(pcs[0]!, bands, lags, 0, 1, count, lanes, 8, 0, needed);
      for (let c = 0; c < count; c++) addBandScores(pcs[0]!, bands, lags[c]!, single, 8, c);
      // a pair alone (bins over two recursions): the same sums to float32 rounding
      const alone = new Float64Array(8 * 8);
      addBandScoresLanes(pcs[0]!, bands, lags, 0, 1, count, alone, 8, 0, needed, true);
      for (let i = 0; i < 64; i++) expect(Math.abs(alone[i]! - lanes[i]!)).toBeLessThan(1e-5 * 110);
      let differs = 0;
      for (let b = 0; b < 8; b++) {
        const bins = bands.end[b]! - bands.start[b]!;
        for (let c = 0; c < 8; c++) {
          const used = c < count && (needed === null || needed[b]! > 0);
          if (!used) {
            expect(lanes[b * 8 + c]).toBe(0);
            continue;
          }
          expect(Math.abs(lanes[b * 8 + c]! - single[b * 8 + c]!)).toBeLessThan(1e-5 * bins);
          if (lanes[b * 8 + c] !== single[b * 8 + c]) differs++;
        }
      }
      // and they are float32 sums, not the double-precision ones under another name
      expect(differs).toBeGreaterThan(0);
    }
  });

  it('refinement of five pairs at once, on some bands', () => {
    const use = Uint8Array.from([0, 1, 1, 1, 0, 1, 1, 0]);
    const start = Float64Array.from([-7, -2, 0, 4, 7]);
    const out = new Float64Array(5);
    refineLagLanes(pcs, bands, use, start, 0, out, new Float64Array(10), new Uint8Array(5));
    // The lanes' derivatives are float32 sums (derivativesF32): the refined lags agree with the
    // double-precision scalar refinement within 1e-5 sample (a hundredth of what a 24-bit
    // recording's noise allows at best), and are not the same numbers.
    let same = 0;
    for (let p = 0; p < 5; p++) {
      const scalar = refineLag(pcs[p]!, bands, use, start[p]!);
      expect(Math.abs(out[p]! - scalar)).toBeLessThan(1e-5);
      if (out[p] === scalar) same++;
      expect(Math.abs(out[p]! - [-7.3, -2.1, 0.4, 3.8, 6.6][p]!)).toBeLessThan(0.2);
    }
    expect(same).toBeLessThan(5);
  });

  it('hop coherence of four pairs at once in float32, from unit spectra with the channels side by side', () => {
    // Six channels (two vectors of four): pairs across both halves of the layout.
    const C = 6;
    const specs = Array.from({ length: C }, () => Float32Array.from({ length: n }, () => rand()));
    const invs = Array.from({ length: C }, () => new Float64Array(n / 2 + 1));
    const layout = unitLayout(C);
    expect(layout).toEqual({ nv: 2, stride: 16, half: 8 });
    const ut = new Float32Array((n / 2 + 1) * layout.stride);
    const [k0, k1] = [3, 257];
    const power = new Float64Array(n / 2 + 1);
    for (let c = 0; c < C; c++) magnitudes(specs[c]!, power, invs[c]!, k0, k1, ut, c, layout);
    // 1 / |X| in float32: within float32 rounding of the double-precision value
    for (let k = k0; k < k1; k++) {
      const want = 1 / Math.hypot(specs[0]![2 * k]!, specs[0]![2 * k + 1]!);
      expect(Math.abs(invs[0]![k]! - want)).toBeLessThan(2e-7 * want);
      expect(Math.fround(invs[0]![k]!)).toBe(invs[0]![k]);
    }
    const chans = Int32Array.from([0, 5, 2, 4, /* b: */ 1, 3, 5, 0]);
    const lags = Float64Array.from([2.7, -5.2, 0.3, 9.9]);
    const ph = new Float32Array(16);
    setPhasorsF32(ph, 0, lags, 0, 1, 4, n, k0);
    const out = new Float32Array(4);
    hopCoherenceLanes(ut, layout, chans, 0, ph, k0, k1, out);
    for (let i = 0; i < 4; i++) {
      const [a, b] = [chans[i]!, chans[4 + i]!];
      // the double-precision single kernel: within float32 rounding of its sum over 254 bins
      const want = coherenceSum(specs[a]!, specs[b]!, invs[a]!, invs[b]!, n, lags[i]!, k0, k1);
      expect(Math.abs(out[i]! - want)).toBeLessThan(1e-4);
      expect(out[i]).not.toBe(want);
    }
    // a pair alone (four neighbouring bins in four float32 lanes) gives the same mean within
    // float32 rounding, whatever the bin count left for the last pass
    const scratch = new Float32Array(16);
    for (const [a0, a1] of [[3, 257], [4, 257], [3, 256], [5, 258], [10, 11]] as const) {
      const one = hopCoherenceF32(specs[0]!, specs[1]!, invs[0]!, invs[1]!, n, 2.7, a0, a1, scratch);
      expect(Math.abs(one - coherenceSum(specs[0]!, specs[1]!, invs[0]!, invs[1]!, n, 2.7, a0, a1) / (a1 - a0))).toBeLessThan(1e-5);
    }
  });
});

import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { createAnalysis } from '../../src/analysis/analysis.js';
import { HopAnalyzer, type HopResult } from '../../src/analysis/hop-analyzer.js';
import { makeBands } from '../../src/dsp/bands.js';
import { pffft } from '../../src/dsp/pffft-backend.js';
import { addBandScores, coherenceSum, PairCorrelator, refineLag } from '../../src/dsp/gcc.js';
import { addBandScoresLanes, hopCoherenceF32, hopCoherenceLanes, magnitudes, refineLagLanes, setPhasorsF32, unitLayout } from '../../src/dsp/gcc-lanes.js';
import { OnsetWeigher } from '../../src/dsp/onset.js';
import { hannWindow, windowFrame } from '../../src/dsp/window.js';
import { GccKernels, wasmKernelsAvailable } from '../../src/dsp/gcc-kernels.js';
import { SrpDirectionModel } from '../../src/direction/srp-search.js';
import { pairGeometry, type ArrayGeometry } from '../../src/geometry/array-geometry.js';
import { loadGeometryFile } from '../../src/geometry/geometry-file.js';

/**
 * The WebAssembly SIMD kernels (src/dsp/gcc-kernels.wat) must give the JavaScript kernels'
 * results to the last bit: the JavaScript kernels (src/dsp/gcc.ts) are what the accuracy tests
 * (numpy, sox, the Cramer-Rao bound) check, and the analysis promises the same outputs
 * whichever path runs. Cross-spectra of a plane wave at a known lag plus noise (common
 * practice, no source) exercise every lane; toBe compares with Object.is (bit for bit up to NaN).
 */
function seeded(seed: number): () => number {
  let s = seed;
  return () => ((s = (s * 1664525 + 1013904223) >>> 0) / 2 ** 32) - 0.5;
}

const n = 1024;
const bins = n / 2 + 1;
const bands = makeBands(n, 48000, 150, 12000, 8);

function filled(k: GccKernels, lag: number, rand: () => number): PairCorrelator {
  const pc = new PairCorrelator(n, 24, { accRe: k.f64(bins), accIm: k.f64(bins) });
  for (let i = 0; i < bins; i++) {
    const ph = (-2 * Math.PI * i * lag) / n;
    pc.accRe[i] = Math.cos(ph) + 0.4 * rand();
    pc.accIm[i] = Math.sin(ph) + 0.4 * rand();
  }
  return pc;
}

describe('WebAssembly GCC kernels give the JavaScript kernels results bit for bit', () => {
  it('load wherever PFFFT (WebAssembly SIMD) loads, unless BEARLINE_KERNELS=js or BEARLINE_FFT=fftjs', () => {
    expect(wasmKernelsAvailable()).toBe(pffft !== null && process.env.BEARLINE_KERNELS !== 'js' && process.env.BEARLINE_FFT !== 'fftjs');
  });
  const k = GccKernels.create(1 << 20);
  const run = k ? it : it.skip;
  const rand = seeded(5);
  const pcs = k ? [-7.3, -2.1, 0.4, 3.8, 6.6].map((lag) => filled(k, lag, rand)) : [];

  run.each([1, 2, 3, 4, 5, 7])('band scores of %i candidates, of one pair and of two side by side, with and without bands left out', (count) => {
    k!.setBands(bands);
    const lags = Float64Array.from([-7, -2, 0.5, 4, 6.5, 1.25, -3.5, 2, 9.5, -4.25, 0, 3.3, -1.5, 5.5]);
    const needed = k!.f64(8);
    needed.set([1, 0, 2, 0.5, 0, 1, 1, 3]);
    for (const need of [null, needed]) {
      // JavaScript lanes (float32, src/dsp/gcc-lanes.ts): pair 1 at lags[2c], then pair 2 at lags[2c + 1],
      const js = new Float64Array(8 * 8);
      addBandScoresLanes(pcs[1]!, bands, lags, 0, 2, count, js, 8, 0, need);
      addBandScoresLanes(pcs[2]!, bands, lags, 1, 2, count, js, 8, 0, need);
      // a pair alone: its bins over two recursions
      const jsOne = new Float64Array(8 * 8);
      addBandScoresLanes(pcs[1]!, bands, lags, 0, 2, count, jsOne, 8, 0, need, true);
      const one = k!.f64(8 * 8);
      k!.addBandScores(pcs[1]!, null, n, lags, 0, 1, 2, count, one, 8, 0, need);
      const two = k!.f64(8 * 8);
      k!.addBandScores(pcs[1]!, pcs[2]!, n, lags, 0, 1, 2, count, two, 8, 0, need);
      for (let i = 0; i < 64; i++) {
        expect(one[i]).toBe(jsOne[i]);
        expect(two[i]).toBe(js[i]);
        if (i % 8 >= count) expect(two[i]).toBe(0);
      }
      // and near the double-precision single kernel (float32 rounding)
      const single = new Float64Array(8 * 8);
      for (let c = 0; c < count; c++) addBandScores(pcs[1]!, bands, lags[2 * c]!, single, 8, c);
      for (let b = 0; b < 8; b++) {
        if (need !== null && !(need[b]! > 0)) continue;
        for (let c = 0; c < count; c++) expect(Math.abs(one[b * 8 + c]! - single[b * 8 + c]!)).toBeLessThan(1e-3);
      }
    }
  });

  run('refinement of five pairs, and of one pair alone, on some bands', () => {
    k!.setBands(bands);
    const use = k!.u8(8);
    use.set([0, 1, 1, 1, 0, 1, 1, 0]);
    const start = Float64Array.from([-7, -2, 0, 4, 7]);
    const out = new Float64Array(5);
    k!.refineLags(pcs, n, use, start, 0, out, new Float64Array(10), new Uint8Array(5));
    // Bit for bit: the JavaScript lanes (src/dsp/gcc-lanes.ts, float32 derivatives four bins a
    // lane, two pairs a pass, the fifth alone); within 1e-5 sample of the double-precision scalar
    // refineLag.
    const lanes = new Float64Array(5);
    refineLagLanes(pcs, bands, use, start, 0, lanes, new Float64Array(10), new Uint8Array(5));
    for (let p = 0; p < 5; p++) {
      expect(out[p]).toBe(lanes[p]);
      expect(Math.abs(out[p]! - refineLag(pcs[p]!, bands, use, start[p]!))).toBeLessThan(1e-5);
      expect(Math.abs(out[p]! - [-7.3, -2.1, 0.4, 3.8, 6.6][p]!)).toBeLessThan(0.2);
    }
    k!.refineLags([pcs[2]!], n, use, start, 2, out, new Float64Array(2), new Uint8Array(1));
    refineLagLanes([pcs[2]!], bands, use, start, 2, lanes, new Float64Array(2), new Uint8Array(1));
    expect(out[0]).toBe(lanes[0]);
    expect(Math.abs(out[0]! - refineLag(pcs[2]!, bands, use, start[2]!))).toBeLessThan(1e-5);
    // runs of used bands whose bins are not a multiple of four (the last lanes cleared), every band
    for (const flags of [[1, 1, 1, 1, 1, 1, 1, 1], [1, 0, 1, 0, 1, 0, 1, 1], [0, 0, 0, 0, 0, 0, 0, 1]]) {
      use.set(flags);
      k!.refineLags(pcs, n, use, start, 0, out, new Float64Array(10), new Uint8Array(5));
      refineLagLanes(pcs, bands, use, start, 0, lanes, new Float64Array(10), new Uint8Array(5));
      for (let p = 0; p < 5; p++) {
        expect(out[p]).toBe(lanes[p]);
        expect(Math.abs(out[p]! - refineLag(pcs[p]!, bands, use, start[p]!))).toBeLessThan(1e-5);
      }
    }
  });

  run.each([[3, 257], [4, 257], [3, 256]] as const)('onset and presence weights over bins %i to %i, 40 hops of rising and falling power', (k0, k1) => {
    const settings = { floor: 0.3, fullRise: 4, backgroundDecay: 0.8, floorRise: 1.002, fullPresence: 4 };
    const js = new OnsetWeigher(bins, settings);
    const wasm = new OnsetWeigher(bins, settings, k!);
    const power = k!.f64(bins);
    const [wj, ww] = [new Float64Array(bins), k!.f64(bins)];
    let rising = 0;
    for (let hop = 0; hop < 40; hop++) {
      const level = hop % 10 < 3 ? 30 : 1; // a call every 10 hops over a steady floor
      for (let i = 0; i < bins; i++) power[i] = level * (1 + rand()) ** 2 * (i % 7 === 0 ? 0 : 1);
      const a = js.update(power, k0, k1, wj);
      const b = wasm.update(power, k0, k1, ww);
      expect(b).toBe(a);
      if (a > 0.5) rising++;
      for (let i = k0; i < k1; i++) expect(ww[i]).toBe(wj[i]);
    }
    expect(rising).toBeGreaterThan(2);
  });

  // The kernel carries the sum of the background from one hop to the next instead of adding it up
  // again: with the bins changing between hops it must add it up afresh (the same weights as the
  // JavaScript, which always does).
  run('onset and presence weights when the bins change between hops', () => {
    const settings = { floor: 0.3, fullRise: 4, backgroundDecay: 0.8, floorRise: 1.002, fullPresence: 4 };
    const js = new OnsetWeigher(bins, settings);
    const wasm = new OnsetWeigher(bins, settings, k!);
    const power = k!.f64(bins);
    const [wj, ww] = [new Float64Array(bins), k!.f64(bins)];
    const ranges = [[3, 257], [3, 257], [5, 200], [5, 200], [3, 257], [4, 257], [4, 257]] as const;
    for (let hop = 0; hop < 28; hop++) {
      const [k0, k1] = ranges[hop % ranges.length]!;
      for (let i = 0; i < bins; i++) power[i] = (hop % 5 === 0 ? 20 : 1) * (1 + rand()) ** 2;
      expect(wasm.update(power, k0, k1, ww)).toBe(js.update(power, k0, k1, wj));
      for (let i = k0; i < k1; i++) expect(ww[i]).toBe(wj[i]);
    }
  });

  // Runs on the JavaScript path too (its check against the definition); the comparison with WebAssembly where it loads.
  it.each([[3, 257], [4, 257], [3, 256]] as const)('the bins that sound has left, found in the onset pass, over bins %i to %i', (k0, k1) => {
    // The same calls over a floor as above; after each call's 3 loud hops its bins fall back to
    // the floor. The quiet search must not touch the weights, and both paths list the same bins
    // in the same order, each of them meeting the definition (OnsetWeigher's QuietSearch) recomputed
    // here from the noise floor the weigher leaves and the held powers kept by this test.
    const settings = { floor: 0.3, fullRise: 4, backgroundDecay: 0.8, floorRise: 1.002, fullPresence: 4 };
    const search = { quietRatio: 2, loudRatio: 4, heldDecay: 0.9 };
    const plain = new OnsetWeigher(bins, settings);
    const js = new OnsetWeigher(bins, settings, null, search);
    const wasm = k ? new OnsetWeigher(bins, settings, k, search) : null;
    const power = k ? k.f64(bins) : new Float64Array(bins);
    const [wp, wj, ww] = [new Float64Array(bins), new Float64Array(bins), k ? k.f64(bins) : new Float64Array(bins)];
    const held = new Float64Array(bins);
    let listed = 0;
    for (let hop = 0; hop < 40; hop++) {
      const level = hop % 10 < 3 ? 30 : 1;
      for (let i = 0; i < bins; i++) power[i] = level * (1 + rand()) ** 2 * (i % 7 === 0 ? 0 : 1);
      const a = plain.update(power, k0, k1, wp);
      expect(js.update(power, k0, k1, wj)).toBe(a);
      for (let i = k0; i < k1; i++) expect(wj[i]).toBe(wp[i]);
      if (wasm) {
        expect(wasm.update(power, k0, k1, ww)).toBe(a);
        for (let i = k0; i < k1; i++) expect(ww[i]).toBe(wp[i]);
        expect(wasm.quietCount).toBe(js.quietCount);
        expect(Array.from(wasm.quietList.subarray(0, wasm.quietCount))).toEqual(Array.from(js.quietList.subarray(0, js.quietCount)));
      }
      const want: number[] = [];
      for (let i = k0; i < k1; i++) {
        const h = held[i]! * search.heldDecay;
        held[i] = Math.max(power[i]!, h);
        const mean = 2.5 * js.noiseFloor[i]!; // the floor's mean: the tracked minimum times its bias factor
        if (power[i]! < search.quietRatio * mean && h >= search.loudRatio * mean) want.push(i);
      }
      expect(Array.from(js.quietList.subarray(0, js.quietCount))).toEqual(want);
      listed += want.length;
    }
    expect(listed).toBeGreaterThan(100);
  });

  run('the window and the sum of squares of a frame (four partial sums, as windowFrame adds them)', () => {
    const x = k!.f64(n);
    const win = k!.f64(n);
    for (let i = 0; i < n; i++) x[i] = rand();
    win.set(hannWindow(n));
    const w = k!.f32(n);
    const js = new Float32Array(n);
    const sum = k!.window1(x, win, w);
    expect(sum).toBe(windowFrame(x, win, js));
    for (let i = 0; i < n; i++) expect(w[i]).toBe(js[i]);
    // the same sum as one added in order, to rounding (common practice, no source)
    let plain = 0;
    for (let i = 0; i < n; i++) plain += x[i]! * x[i]!;
    expect(Math.abs(sum - plain)).toBeLessThan(1e-12 * plain);
    expect(js[5]).toBe(Math.fround(x[5]! * win[5]!));
  });

  run('listed bins of every cross-spectrum scaled (the forgetting of the bins sound has left)', () => {
    const both = [filled(k!, 1.5, rand), filled(k!, -3.25, rand)];
    const before = both.map((pc) => [Float64Array.from(pc.accRe), Float64Array.from(pc.accIm)] as const);
    const list = k!.i32(bins);
    list.set([3, 17, 18, 200, 256]);
    k!.scaleListed(k!.crossSpectrumAddresses(both), list, 4, 0.3);
    both.forEach((pc, p) => {
      for (let i = 0; i < bins; i++) {
        const f = i === 3 || i === 17 || i === 18 || i === 200 ? 0.3 : 1;
        expect(pc.accRe[i]).toBe(f === 1 ? before[p]![0][i] : before[p]![0][i]! * f);
        expect(pc.accIm[i]).toBe(f === 1 ? before[p]![1][i] : before[p]![1][i]! * f);
      }
    });
  });

  run('magnitudes, weights x 1/|X|, the cross-spectrum memory and the hop coherence on float32 spectra', () => {
    const spec = () => {
      const s = k!.f32(n);
      for (let i = 0; i < n; i++) s[i] = rand();
      s[20] = 0; // an empty bin (10): 1/|X| is 0 there
      s[21] = 0;
      return s;
    };
    const [a, b] = [spec(), spec()];
    for (const [k0, k1] of [[3, 257], [4, 257], [3, 256], [10, 11]] as const) {
      const power = k!.f64(bins);
      const invA = k!.f64(bins);
      const invB = k!.f64(bins);
      power.fill(0.25);
      k!.magnitudes(a, power, invA, k0, k1);
      k!.magnitudes(b, power, invB, k0, k1);
      const f = Math.fround;
      for (let i = k0; i < k1; i++) {
        const pa = a[2 * i]! * a[2 * i]! + a[2 * i + 1]! * a[2 * i + 1]!;
        const pb = b[2 * i]! * b[2 * i]! + b[2 * i + 1]! * b[2 * i + 1]!;
        expect(power[i]).toBe(0.25 + pa + pb);
        // 1 / |X| in float32 (IEEE binary32 square root and division, as Math.fround gives them)
        expect(invA[i]).toBe(pa > 1e-30 ? f(1 / f(Math.sqrt(f(pa)))) : 0);
        expect(invB[i]).toBe(pb > 1e-30 ? f(1 / f(Math.sqrt(f(pb)))) : 0);
      }
      const w = k!.f64(bins);
      for (let i = 0; i < bins; i++) w[i] = 0.5 + rand();
      const wInv = k!.f64(bins);
      k!.times(w, invA, wInv, k0, k1);
      for (let i = k0; i < k1; i++) expect(wInv[i]).toBe(w[i]! * invA[i]!);
      const js = new PairCorrelator(n, 24);
      const wasm = new PairCorrelator(n, 24, { accRe: k!.f64(bins), accIm: k!.f64(bins) });
      for (let hop = 0; hop < 3; hop++) {
        js.accumulate(a, b, wInv, invB, k0, k1, 0.8);
        k!.accumulate(wasm, a, b, wInv, invB, k0, k1, 0.8);
      }
      for (let i = 0; i < bins; i++) {
        expect(wasm.accRe[i]).toBe(js.accRe[i]);
        expect(wasm.accIm[i]).toBe(js.accIm[i]);
      }
      // one pair alone: its halves side by side in the lanes
      const alone = k!.hopCoherence1(a, b, invA, invB, 2.7, n, k0, k1);
      expect(alone).toBe(hopCoherenceF32(a, b, invA, invB, n, 2.7, k0, k1, new Float32Array(16)));
      expect(Math.abs(alone - coherenceSum(a, b, invA, invB, n, 2.7, k0, k1) / (k1 - k0))).toBeLessThan(1e-5);
    }
  });

  run.each([3, 4, 6, 8])('magnitudes with unit spectra, and the hop coherence of four pairs at once, %i channels', (C) => {
    const layout = unitLayout(C);
    const specs = Array.from({ length: C }, () => {
      const s = k!.f32(n);
      for (let i = 0; i < n; i++) s[i] = rand();
      return s;
    });
    const invs = specs.map(() => k!.f64(bins));
    const invsJs = specs.map(() => new Float64Array(bins));
    const utJs = new Float32Array(bins * layout.stride);
    const utWasm = k!.f32(bins * layout.stride);
    for (const [k0, k1] of [[3, 257], [4, 258], [10, 11]] as const) {
      const power = k!.f64(bins);
      const powerJs = new Float64Array(bins);
      for (let c = 0; c < C; c++) {
        magnitudes(specs[c]!, powerJs, invsJs[c]!, k0, k1, utJs, c, layout);
        k!.magnitudes(specs[c]!, power, invs[c]!, k0, k1, utWasm, c, layout);
      }
      for (let i = 0; i < utJs.length; i++) expect(utWasm[i]).toBe(utJs[i]);
      for (let i = 0; i < bins; i++) expect(power[i]).toBe(powerJs[i]);
      for (let c = 0; c < C; c++) for (let i = 0; i < bins; i++) expect(invs[c]![i]).toBe(invsJs[c]![i]);
      // every pair of the C channels, four at a time (the last group's spare lanes repeat its last pair)
      const pairs: [number, number][] = [];
      for (let a = 0; a < C; a++) for (let b = a + 1; b < C; b++) pairs.push([a, b]);
      const lags = Float64Array.from(pairs, (_, p) => 7 * Math.sin(p + 1));
      for (let p = 0; p < pairs.length; p += 4) {
        const w = Math.min(4, pairs.length - p);
        const lane = (i: number) => pairs[p + Math.min(i, w - 1)]!;
        const a = [0, 1, 2, 3].map((i) => lane(i)[0]);
        const b = [0, 1, 2, 3].map((i) => lane(i)[1]);
        const idx = k!.u8(32 * layout.nv);
        GccKernels.swizzles(a, b, layout.nv, idx);
        const wasm = k!.f32(4);
        k!.hopCoherenceT(utWasm, layout, idx, lags, p, w, n, k0, k1, wasm);
        const ph = new Float32Array(16);
        setPhasorsF32(ph, 0, lags, p, 1, w, n, k0);
        const js = new Float32Array(4);
        hopCoherenceLanes(utJs, layout, Int32Array.from([...a, ...b]), 0, ph, k0, k1, js);
        for (let i = 0; i < 4; i++) expect(wasm[i]).toBe(js[i]);
        for (let i = 0; i < w; i++) {
          const want = coherenceSum(specs[a[i]!]!, specs[b[i]!]!, invs[a[i]!]!, invs[b[i]!]!, n, lags[p + i]!, k0, k1);
          expect(Math.abs(js[i]! - want)).toBeLessThan(1e-4);
        }
      }
    }
  });
});

/** Noise from one direction in calls (0.4 s on, quiet between) with independent noise per mic. */
function scene(channels: number, seconds: number, rand: () => number): Float64Array[] {
  const rate = 48000;
  const len = seconds * rate;
  const common = Float64Array.from({ length: len + 64 }, () => rand());
  return Array.from({ length: channels }, (_, c) => {
    const x = new Float64Array(len);
    for (let i = 0; i < len; i++) x[i] = ((i / rate) % 1 < 0.4 ? 0.5 : 0.005) * common[i + 64 - 2 * c]! + 0.05 * rand();
    return x;
  });
}

function snapshot(r: HopResult): string {
  return JSON.stringify([r.levelDbfs, Array.from(r.channelLevelsDbfs), r.confidence, r.valid, Array.from(r.tdoaS), Array.from(r.pairOwnTdoaS), r.sources.slice(0, r.sourceCount), r.agree, r.share, r.evidence, r.fresh, r.freshZ, r.snrDb, r.onset, r.apertureWaves, Array.from(r.bandVoteWeight), Array.from(r.bandSnrDb), Array.from(r.pairPeak), Array.from(r.pairAgreement)]);
}

describe('the hop analyzer gives the same outputs, bit for bit, on the WebAssembly and the JavaScript kernels', () => {
  const preset = (p: string) => loadGeometryFile(fileURLToPath(new URL(`../../configs/arrays/${p}.json`, import.meta.url)));
  // The scene's delays (2 samples per channel) fit no direction of the circles or the square
  // exactly: the 8-mic circle searching 12 of its pairs (the default) and the square (since the
  // confidence refit of --quiet-memory: 46 of its hops) report fewer of their hops, and on the
  // tetrahedron the pairs' own peaks (2 to 6 samples) lie nearer zero than any direction's
  // delays, so its hops read as a sound at every mic at once (confidence 0, src/analysis/closure.ts).
  // The guard only makes sure the comparison covers hops whose direction was worked out.
  const cases: [string, ArrayGeometry, number, number][] = [
    ['pair', pairGeometry(0.2), 15, 50],
    ['triangle (three pairs: the last one refined alone)', preset('triangle-10cm'), 15, 50],
    ['square', preset('square-10cm'), 15, 40],
    ['tetrahedron', preset('tetrahedron-10cm'), 15, 50],
    ['circle of 6', preset('circle6-r5cm'), 15, 50],
    ['circle of 8 (12 pairs searched)', preset('circle8-r5cm'), 15, 40],
    ['circle of 8 (all 28 pairs searched)', preset('circle8-r5cm'), 0, 50],
  ];
  const run = wasmKernelsAvailable() ? it : it.skip;
  run.each(cases)('%s', (_name, geometry, searchPairs, minValid) => {
    const setup = createAnalysis(geometry, 48000, 343, { maxCandidates: 5, searchPairs });
    const wasm = setup.analyzer;
    const js = new HopAnalyzer(geometry.mics.length, 48000, setup.model, setup.options, 'js');
    wasm.diagnostics = true;
    js.diagnostics = true;
    const x = scene(geometry.mics.length, 2, seeded(9));
    const frames = x.map(() => new Float64Array(wasm.frame));
    // Every other hop the frames are written straight into the analyzer's own buffers (as the framer does).
    const own = wasm.inputFrames();
    expect(own?.length).toBe(geometry.mics.length);
    let valid = 0;
    for (let at = 0, h = 0; at + wasm.frame <= x[0]!.length; at += wasm.hop, h++) {
      for (let c = 0; c < x.length; c++) frames[c]!.set(x[c]!.subarray(at, at + wasm.frame));
      if (h % 2 === 1) for (let c = 0; c < x.length; c++) own![c]!.set(frames[c]!);
      const a = snapshot(wasm.process(h % 2 === 1 ? own! : frames));
      if (wasm.result.sourceCount > 0) valid++;
      expect(a).toBe(snapshot(js.process(frames)));
    }
    expect(valid).toBeGreaterThan(minValid);
  });
});

describe('the per-hop path on the kernels reads no byteOffset', () => {
  // The getter costs about 8 ns a read on Node 20 and a hop passed a few hundred arrays (the
  // 8-mic circle: 684 reads a hop before the arrays carried their address, some 5 us). A count,
  // not a time: the getter wrapped while the analyzer runs.
  const preset = (p: string) => loadGeometryFile(fileURLToPath(new URL(`../../configs/arrays/${p}.json`, import.meta.url)));
  const run = wasmKernelsAvailable() ? it : it.skip;
  run.each([['pair', pairGeometry(0.2)], ['square', preset('square-10cm')], ['circle of 8', preset('circle8-r5cm')]] as const)('%s', (_name, geometry) => {
    const { analyzer } = createAnalysis(geometry, 48000, 343, {});
    const x = scene(geometry.mics.length, 1, seeded(4));
    const own = analyzer.inputFrames()!;
    const typed = Object.getPrototypeOf(Int8Array.prototype) as object;
    const getter = Object.getOwnPropertyDescriptor(typed, 'byteOffset')!;
    let reads = 0;
    let valid = 0;
    Object.defineProperty(typed, 'byteOffset', { configurable: true, get(this: ArrayBufferView) { reads++; return getter.get!.call(this); } });
    try {
      for (let at = 0; at + analyzer.frame <= x[0]!.length; at += analyzer.hop) {
        for (let c = 0; c < x.length; c++) own[c]!.set(x[c]!.subarray(at, at + analyzer.frame));
        if (analyzer.process(own).valid) valid++;
      }
    } finally {
      Object.defineProperty(typed, 'byteOffset', getter);
    }
    expect(valid).toBeGreaterThan(20);
    expect(reads).toBe(0);
  });
});

describe('the steered response search gives the same candidates on the WebAssembly and the JavaScript coarse pass', () => {
  const preset = (p: string) => loadGeometryFile(fileURLToPath(new URL(`../../configs/arrays/${p}.json`, import.meta.url)));
  const run = wasmKernelsAvailable() ? it : it.skip;
  run.each(['square-10cm', 'tetrahedron-10cm', 'circle8-r5cm'])('%s', (name) => {
    const geometry = preset(name);
    const wasm = new SrpDirectionModel(geometry, 48000, 343, 0.1, 1024);
    const js = new SrpDirectionModel(geometry, 48000, 343, 0.1, 1024, {}, 'js');
    const rand = seeded(3);
    const pcs = wasm.pairs.map((_, p) => new PairCorrelator(1024, wasm.maxLag[p]!));
    const [lw, lj] = [new Float64Array(8 * pcs.length), new Float64Array(8 * pcs.length)];
    const [sw, sj] = [new Float64Array(8), new Float64Array(8)];
    let total = 0;
    for (let hop = 0; hop < 40; hop++) {
      // a peak at a random direction's lags plus noise, for every pair
      const shift = 6 * rand();
      for (const pc of pcs) for (let i = 0; i < 1024; i++) pc.gcc[i] = rand() + Math.exp(-(((i > 512 ? i - 1024 : i) - shift) ** 2) / 8);
      const cw = wasm.findCandidates(pcs, 6, lw, sw);
      const cj = js.findCandidates(pcs, 6, lj, sj);
      expect(cw).toBe(cj);
      expect(Array.from(lw)).toEqual(Array.from(lj));
      expect(Array.from(sw)).toEqual(Array.from(sj));
      total += cw;
    }
    expect(total).toBeGreaterThan(40);
  });
});

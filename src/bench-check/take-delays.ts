/**
 * Delays, polarity and levels of one bench take (one source direction held still), measured
 * over the whole take with GCC-PHAT (Knapp and Carter 1976): the PHAT cross-spectrum of every
 * frame of a segment is summed, the largest correlation magnitude within the search window is
 * taken (its sign tells the polarity), and the lag is refined on the continuous correlation
 * (refineLag of src/dsp/gcc.ts). Pure: arrays in, numbers out.
 *
 * Why not the per-hop analysis of src/analysis: its lag range is the file geometry's D / c
 * (plus a small margin), which a wrong spacing or a channel skew can exceed, it looks for
 * positive peaks only (an inverted channel would be missed) and it weights onsets, which a
 * steady bench stimulus does not have. A bench take is still and long, so one sum over it is
 * also the most exact estimate.
 */
import { makeBands, type BandLayout } from '../dsp/bands.js';
import { RealFft } from '../dsp/fft.js';
import { inverseMagnitudes, PairCorrelator, refineLag } from '../dsp/gcc.js';
import { hannWindow } from '../dsp/window.js';

/** A segment counts only when its normalised correlation peak reaches this (common practice, no source). */
export const MIN_SEGMENT_PEAK = 0.05;

export interface DelaySearch {
  sampleRate: number;
  /** Pairs (a, b), a < b, in interface.md order. */
  pairs: readonly (readonly [number, number])[];
  /** Half-width of the first segment's search window per pair, samples. */
  firstWindow: Float64Array;
  /** Half-width of the search window around the previous segment's lag, samples. */
  trackWindow: number;
  segmentSamples: number;
  minFreqHz: number;
  maxFreqHz: number;
}

export interface SegmentDelays {
  /** Centre of the segment, seconds from the start of the recording. */
  timeS: number;
  /** tdoa per pair, seconds (arrival at b minus arrival at a); NaN where the peak was too weak. */
  tdoaS: Float64Array;
  /** Sign of the correlation peak per pair (+1, -1; 0 when too weak). */
  sign: Int8Array;
  /** Normalised peak height per pair (1 = identical signals up to a delay). */
  peak: Float64Array;
}

export interface TakeDelays {
  segments: SegmentDelays[];
  /** Mean-square level per channel over the take, dBFS. */
  levelDbfs: Float64Array;
  /** Frame length used, samples. */
  frame: number;
}

function nextPow2(x: number): number {
  return 2 ** Math.ceil(Math.log2(Math.max(8, x)));
}

/** The frame length for a search: long enough that the largest lag is small against it. */
export function chooseFrame(sampleRate: number, largestLagSamples: number, segmentSamples: number): number {
  let n = nextPow2(Math.max(0.04 * sampleRate, 8 * largestLagSamples));
  n = Math.min(n, 65536);
  while (n > 64 && n * 2 > segmentSamples) n /= 2;
  return n;
}

/**
 * Measure a take: samples [start, end) of each channel, cut into segments of about
 * `segmentSamples`. `largestLag` (samples) sizes the frame for the lags the take may reach.
 */
export function measureTake(
  channels: readonly Float32Array[],
  start: number,
  end: number,
  search: DelaySearch,
  largestLag: number,
): TakeDelays {
  const M = channels.length;
  const P = search.pairs.length;
  const fs = search.sampleRate;
  const n = chooseFrame(fs, largestLag, Math.min(search.segmentSamples, end - start));
  const hop = n / 2;
  const fft = new RealFft(n);
  const bins = n / 2 + 1;
  const win = hannWindow(n);
  const buf = fft.createInput();
  const spectra = Array.from({ length: M }, () => fft.createSpectrum());
  const invMag = Array.from({ length: M }, () => new Float64Array(bins));
  const bands: BandLayout = makeBands(n, fs, search.minFreqHz, Math.min(search.maxFreqHz, 0.45 * fs), 1);
  const useBand = new Uint8Array([1]);
  const ones = new Float64Array(bins).fill(1);
  const corr = search.pairs.map(() => new PairCorrelator(n, n / 2 - 1));
  const binCount = bands.endBin - bands.firstBin;

  const total = end - start;
  const segCount = Math.max(1, Math.round(total / search.segmentSamples));
  const segLen = Math.floor(total / segCount);
  const centre = new Float64Array(P);
  const haveCentre = new Uint8Array(P);
  const segments: SegmentDelays[] = [];
  const ms = new Float64Array(M);

  for (let s = 0; s < segCount; s++) {
    const s0 = start + s * segLen;
    const s1 = s === segCount - 1 ? end : s0 + segLen;
    for (const pc of corr) {
      pc.accRe.fill(0);
      pc.accIm.fill(0);
    }
    let frames = 0;
    for (let f = s0; f + n <= s1; f += hop) {
      for (let c = 0; c < M; c++) {
        const x = channels[c]!;
        for (let i = 0; i < n; i++) buf[i] = x[f + i]! * win[i]!;
        fft.forwardInterleaved(buf, spectra[c]!);
        inverseMagnitudes(spectra[c]!, bands.firstBin, bands.endBin, invMag[c]!);
      }
      for (let p = 0; p < P; p++) {
        const [a, b] = search.pairs[p]!;
        corr[p]!.accumulate(spectra[a]!, spectra[b]!, invMag[a]!, invMag[b]!, ones, bands.firstBin, bands.endBin, 1);
      }
      frames++;
    }
    for (let c = 0; c < M; c++) {
      const x = channels[c]!;
      let acc = 0;
      for (let i = s0; i < s1; i++) acc += x[i]! * x[i]!;
      ms[c] += acc;
    }
    const seg: SegmentDelays = {
      timeS: (s0 + s1) / 2 / fs,
      tdoaS: new Float64Array(P).fill(NaN),
      sign: new Int8Array(P),
      peak: new Float64Array(P),
    };
    if (frames > 0) {
      // A perfectly coherent pair peaks at 2 * bins * frames / n after the inverse FFT.
      const full = (2 * binCount * frames) / n;
      for (let p = 0; p < P; p++) {
        const pc = corr[p]!;
        pc.correlate(fft, bands.firstBin, bands.endBin);
        const c0 = haveCentre[p] ? centre[p]! : 0;
        const w = haveCentre[p] ? search.trackWindow : search.firstWindow[p]!;
        const lo = Math.ceil(c0 - w);
        const hi = Math.floor(c0 + w);
        let best = lo;
        let bestAbs = -1;
        for (let lag = lo; lag <= hi; lag++) {
          const v = Math.abs(pc.at(lag));
          if (v > bestAbs) {
            bestAbs = v;
            best = lag;
          }
        }
        const height = bestAbs / full;
        seg.peak[p] = height;
        if (!(height >= MIN_SEGMENT_PEAK)) continue;
        const sign = pc.at(best) < 0 ? -1 : 1;
        if (sign < 0) {
          // Refine the inverted peak as a maximum of the negated correlation.
          for (let k = 0; k < bins; k++) {
            pc.accRe[k] = -pc.accRe[k]!;
            pc.accIm[k] = -pc.accIm[k]!;
          }
        }
        const lag = refineLag(pc, bands, useBand, best, 6);
        seg.tdoaS[p] = lag / fs;
        seg.sign[p] = sign;
        centre[p] = lag;
        haveCentre[p] = 1;
      }
    }
    segments.push(seg);
  }
  const levelDbfs = new Float64Array(M);
  for (let c = 0; c < M; c++) {
    const m = ms[c]! / Math.max(1, total);
    levelDbfs[c] = m > 0 ? 10 * Math.log10(m) : -Infinity;
  }
  return { segments, levelDbfs, frame: n };
}

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
import { RealFft, type FftBuffer } from '../dsp/fft.js';
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
 * Measure a take as it streams: push() its samples in order (any block sizes), then finish().
 * The take of `total` samples is cut into segments of about `segmentSamples`; each segment's
 * frames (hop = frame / 2, none crossing a segment's end) are summed as they complete, so the
 * memory is one frame per channel, whatever the take's length. `largestLag` (samples) sizes the
 * frame for the lags the take may reach.
 */
export class TakeMeasurer {
  private readonly M: number;
  private readonly P: number;
  private readonly n: number;
  private readonly hop: number;
  private readonly fft: RealFft;
  private readonly bins: number;
  private readonly win: Float64Array;
  private readonly buf: FftBuffer;
  private readonly spectra: FftBuffer[];
  private readonly invMag: Float64Array[];
  private readonly bands: BandLayout;
  private readonly useBand = new Uint8Array([1]);
  private readonly corr: PairCorrelator[];
  private readonly binCount: number;
  private readonly segCount: number;
  private readonly segLen: number;
  private readonly centre: Float64Array;
  private readonly haveCentre: Uint8Array;
  private readonly segments: SegmentDelays[] = [];
  private readonly ms: Float64Array;
  /** The current frame's samples per channel (filled to `held`). */
  private readonly frame: Float32Array[];
  private held = 0;
  private frames = 0;
  /** Samples taken so far, and the current segment's index and [s0, s1) (relative to the take). */
  private taken = 0;
  private seg = 0;
  private s0 = 0;
  private s1 = 0;

  constructor(
    channels: number,
    private readonly total: number,
    private readonly search: DelaySearch,
    largestLag: number,
  ) {
    this.M = channels;
    this.P = search.pairs.length;
    const fs = search.sampleRate;
    const n = chooseFrame(fs, largestLag, Math.min(search.segmentSamples, total));
    this.n = n;
    this.hop = n / 2;
    this.fft = new RealFft(n);
    this.bins = n / 2 + 1;
    this.win = hannWindow(n);
    this.buf = this.fft.createInput();
    this.spectra = Array.from({ length: channels }, () => this.fft.createSpectrum());
    this.invMag = Array.from({ length: channels }, () => new Float64Array(this.bins));
    this.bands = makeBands(n, fs, search.minFreqHz, Math.min(search.maxFreqHz, 0.45 * fs), 1);
    this.corr = search.pairs.map(() => new PairCorrelator(n, n / 2 - 1));
    this.binCount = this.bands.endBin - this.bands.firstBin;
    this.segCount = Math.max(1, Math.round(total / search.segmentSamples));
    this.segLen = Math.floor(total / this.segCount);
    this.centre = new Float64Array(this.P);
    this.haveCentre = new Uint8Array(this.P);
    this.ms = new Float64Array(channels);
    this.frame = Array.from({ length: channels }, () => new Float32Array(n));
    this.startSegment(0);
  }

  private startSegment(s: number): void {
    this.seg = s;
    this.s0 = s * this.segLen;
    this.s1 = s === this.segCount - 1 ? this.total : this.s0 + this.segLen;
    this.held = 0;
    this.frames = 0;
    for (const pc of this.corr) {
      pc.accRe.fill(0);
      pc.accIm.fill(0);
    }
  }

  /** Samples [offset, offset + length) of each channel array, next in the take. Samples past the take's end are ignored. */
  push(channels: readonly Float32Array[], offset: number, length: number): void {
    let i = offset;
    const stop = offset + Math.min(length, this.total - this.taken);
    while (i < stop) {
      const room = Math.min(stop - i, this.s1 - this.taken, this.n - this.held);
      for (let c = 0; c < this.M; c++) {
        const x = channels[c]!;
        const f = this.frame[c]!;
        let acc = 0;
        for (let k = 0; k < room; k++) {
          const v = x[i + k]!;
          f[this.held + k] = v;
          acc += v * v;
        }
        this.ms[c] += acc;
      }
      this.held += room;
      this.taken += room;
      i += room;
      if (this.held === this.n) {
        this.addFrame();
        for (const f of this.frame) f.copyWithin(0, this.hop, this.n);
        this.held = this.n - this.hop;
      }
      if (this.taken === this.s1) {
        this.endSegment();
        if (this.seg + 1 < this.segCount) this.startSegment(this.seg + 1);
      }
    }
  }

  private addFrame(): void {
    const { fft, bands, buf, win, n } = this;
    for (let c = 0; c < this.M; c++) {
      const x = this.frame[c]!;
      for (let i = 0; i < n; i++) buf[i] = x[i]! * win[i]!;
      fft.forwardInterleaved(buf, this.spectra[c]!);
      inverseMagnitudes(this.spectra[c]!, bands.firstBin, bands.endBin, this.invMag[c]!);
    }
    for (let p = 0; p < this.P; p++) {
      const [a, b] = this.search.pairs[p]!;
      this.corr[p]!.accumulate(this.spectra[a]!, this.spectra[b]!, this.invMag[a]!, this.invMag[b]!, bands.firstBin, bands.endBin, 1);
    }
    this.frames++;
  }

  private endSegment(): void {
    const { P, search, fft, bands, n, frames } = this;
    const fs = search.sampleRate;
    const seg: SegmentDelays = {
      timeS: (this.s0 + this.s1) / 2 / fs,
      tdoaS: new Float64Array(P).fill(NaN),
      sign: new Int8Array(P),
      peak: new Float64Array(P),
    };
    if (frames > 0) {
      // A perfectly coherent pair peaks at 2 * bins * frames / n after the inverse FFT.
      const full = (2 * this.binCount * frames) / n;
      for (let p = 0; p < P; p++) {
        const pc = this.corr[p]!;
        pc.correlate(fft, bands.firstBin, bands.endBin);
        const c0 = this.haveCentre[p] ? this.centre[p]! : 0;
        const w = this.haveCentre[p] ? search.trackWindow : search.firstWindow[p]!;
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
          for (let k = 0; k < this.bins; k++) {
            pc.accRe[k] = -pc.accRe[k]!;
            pc.accIm[k] = -pc.accIm[k]!;
          }
        }
        const lag = refineLag(pc, bands, this.useBand, best, 6);
        seg.tdoaS[p] = lag / fs;
        seg.sign[p] = sign;
        this.centre[p] = lag;
        this.haveCentre[p] = 1;
      }
    }
    this.segments.push(seg);
  }

  /** Samples taken so far. */
  get samplesTaken(): number {
    return this.taken;
  }

  /**
   * The take's delays and levels. A take that ended early (a truncated file) keeps the segments
   * it completed plus the one it was in, levels over what was read.
   */
  finish(): TakeDelays {
    if (this.taken < this.total && this.taken > this.s0) this.endSegment();
    const levelDbfs = new Float64Array(this.M);
    for (let c = 0; c < this.M; c++) {
      const m = this.ms[c]! / Math.max(1, this.taken);
      levelDbfs[c] = m > 0 ? 10 * Math.log10(m) : -Infinity;
    }
    // the measurer is done: its FFT buffers go back for the next take's
    this.fft.release();
    return { segments: this.segments, levelDbfs, frame: this.n };
  }
}

/** Measure a take held in memory: samples [start, end) of each channel (TakeMeasurer in one push). */
export function measureTake(
  channels: readonly Float32Array[],
  start: number,
  end: number,
  search: DelaySearch,
  largestLag: number,
): TakeDelays {
  const m = new TakeMeasurer(channels.length, end - start, search, largestLag);
  m.push(channels, start, end - start);
  return m.finish();
}

/**
 * Measured magnitude-squared coherence between mic pairs (Welch: Hann-windowed frames,
 * cross- and auto-spectra summed over frames), per fixed source heard alone, and the
 * Cramer-Rao bound of Knapp and Carter from it (src/sim/crlb.ts).
 *
 * Pure and synchronous: frames in (from a Framer), sums kept in buffers allocated once per
 * source. The estimate of C from K frames is biased upward by about (1 - C)^2 / K; the
 * first-order correction (K C - 1) / (K - 1) is applied (common practice, no source).
 */
import { RealFft } from '../dsp/fft.js';
import { hannWindow } from '../dsp/window.js';
import type { MicPair } from '../geometry/array-geometry.js';
import { delayCrlb } from '../sim/crlb.js';

interface Sums {
  frames: number;
  /** Per pair: cross-spectrum real and imaginary sums, per bin. */
  cre: Float64Array[];
  cim: Float64Array[];
  /** Per channel: power sums, per bin. */
  pow: Float64Array[];
}

export class CoherenceMeter {
  private readonly fft: RealFft;
  private readonly window: Float64Array;
  private readonly windowed: Float64Array;
  private readonly re: Float64Array[];
  private readonly im: Float64Array[];
  private readonly sums = new Map<string, Sums>();
  readonly bins: number;

  constructor(
    readonly channels: number,
    readonly frame: number,
    readonly sampleRate: number,
    readonly pairs: readonly MicPair[],
  ) {
    this.fft = new RealFft(frame);
    this.bins = frame / 2 + 1;
    this.window = hannWindow(frame);
    this.windowed = new Float64Array(frame);
    this.re = Array.from({ length: channels }, () => new Float64Array(this.bins));
    this.im = Array.from({ length: channels }, () => new Float64Array(this.bins));
  }

  /** Add one frame (raw samples per channel) heard while `source` alone was active. */
  add(source: string, frames: readonly Float64Array[]): void {
    let s = this.sums.get(source);
    if (!s) {
      const zeros = (): Float64Array => new Float64Array(this.bins);
      s = { frames: 0, cre: this.pairs.map(zeros), cim: this.pairs.map(zeros), pow: Array.from({ length: this.channels }, zeros) };
      this.sums.set(source, s);
    }
    for (let c = 0; c < this.channels; c++) {
      const x = frames[c]!;
      for (let i = 0; i < this.frame; i++) this.windowed[i] = x[i]! * this.window[i]!;
      this.fft.forward(this.windowed, this.re[c]!, this.im[c]!);
      const re = this.re[c]!;
      const im = this.im[c]!;
      const pow = s.pow[c]!;
      for (let k = 0; k < this.bins; k++) pow[k]! += re[k]! * re[k]! + im[k]! * im[k]!;
    }
    this.pairs.forEach(([a, b], p) => {
      const ar = this.re[a]!, ai = this.im[a]!, br = this.re[b]!, bi = this.im[b]!;
      const cre = s.cre[p]!, cim = s.cim[p]!;
      for (let k = 0; k < this.bins; k++) {
        cre[k]! += ar[k]! * br[k]! + ai[k]! * bi[k]!;
        cim[k]! += ai[k]! * br[k]! - ar[k]! * bi[k]!;
      }
    });
    s.frames++;
  }

  /** Frames gathered for a source. */
  framesOf(source: string): number {
    return this.sums.get(source)?.frames ?? 0;
  }

  /** Bias-corrected coherence per bin for a source's pair; null with fewer than 2 frames. */
  coherence(source: string, pairIndex: number): Float64Array | null {
    const s = this.sums.get(source);
    if (!s || s.frames < 2) return null;
    const [a, b] = this.pairs[pairIndex]!;
    const K = s.frames;
    const out = new Float64Array(this.bins);
    for (let k = 0; k < this.bins; k++) {
      const den = s.pow[a]![k]! * s.pow[b]![k]!;
      const raw = den > 0 ? (s.cre[pairIndex]![k]! ** 2 + s.cim[pairIndex]![k]! ** 2) / den : 0;
      out[k] = Math.max(0, (K * raw - 1) / (K - 1));
    }
    return out;
  }

  /** Frequencies of the bins (Hz). */
  frequencies(): Float64Array {
    return Float64Array.from({ length: this.bins }, (_, k) => (k * this.sampleRate) / this.frame);
  }

  /** Cramer-Rao bound on the delay's standard deviation (s) over `observationS`, from the measured coherence. */
  delayBound(source: string, pairIndex: number, observationS: number): number | null {
    const c = this.coherence(source, pairIndex);
    return c ? Math.sqrt(delayCrlb(observationS, this.frequencies(), c)) : null;
  }
}

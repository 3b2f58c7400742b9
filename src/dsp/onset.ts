import type { BandLayout } from './bands.js';
import type { GccKernels } from './gcc-kernels.js';

/**
 * Per-bin weights for the cross-spectrum memory, from each bin's power over time:
 *
 * - Onset weighting (the precedence idea: the direct path arrives first, reflections later).
 *   The power of the current hop is compared with a short average of the hops before it. A
 *   sharp rise gets full weight; steady or decaying sound gets the floor weight.
 * - Presence: a bin at its noise floor carries no direction (PHAT would give it as much say
 *   as a loud bin), so each bin's weight is scaled by how far its lightly smoothed power stands
 *   above a slowly rising minimum of that power, scaled up to the mean of noise (minimum
 *   tracking with a bias factor; common practice in noise estimation, no source).
 *
 * Pure state machine: one call per hop, no allocation.
 */
export interface OnsetSettings {
  /** Weight of steady sound, in [0, 1]; 1 switches onset weighting off. */
  readonly floor: number;
  /** Rise (power ratio) that earns full weight; e.g. 4 = 6 dB within one hop. */
  readonly fullRise: number;
  /** Smoothing factor per hop of the background power average, in [0, 1). */
  readonly backgroundDecay: number;
  /** Growth factor per hop of the noise floor when the power stays above it (> 1). */
  readonly floorRise: number;
  /** Power over the noise floor that counts as fully present (ratio). */
  readonly fullPresence: number;
}

/**
 * The search for the bins that sound has left (OnsetWeigher.quietList), run in update()'s pass
 * over the bins: a bin is listed when its power this hop is below `quietRatio` times its noise
 * mean (the tracked minimum times its bias factor) and it stood at least `loudRatio` times over
 * it lately (its largest power, held and decaying by `heldDecay` per hop, against today's noise
 * mean).
 */
export interface QuietSearch {
  readonly quietRatio: number;
  readonly loudRatio: number;
  /** Decay per hop of the held largest power, in [0, 1]. */
  readonly heldDecay: number;
}

/** Smoothing of the power that presence looks at (per hop), and the minimum's bias factor. */
const SMOOTH = 0.5;
const NOISE_BIAS = 2.5;

export class OnsetWeigher {
  private readonly background: Float64Array;
  private readonly noise: Float64Array;
  private readonly smooth: Float64Array;
  /** Per bin, its largest power lately, decaying (the quiet search; empty without one). */
  private readonly held: Float64Array;
  /** The quiet search's thresholds against the tracked minimum (ratios times the bias factor); 0 without one. */
  private readonly quietAt: number;
  private readonly loudAt: number;
  private readonly heldDecay: number;
  /**
   * The bins that sound has left this hop (see QuietSearch), in increasing order: the first
   * quietCount entries, written by update() when the weigher has a quiet search. Scratch for the
   * caller until the next update().
   */
  readonly quietList: Int32Array;
  /** How many entries of quietList update() wrote this hop (0 without a quiet search). */
  quietCount = 0;
  private primed = false;
  private readonly invRise: number;
  private readonly invPresence: number;
  /** The settings as the WebAssembly kernel reads them (null on the JavaScript path). */
  private readonly kernelSettings: Float64Array | null;
  /** Where the WebAssembly kernel writes quietCount (null on the JavaScript path). */
  private readonly kernelCount: Int32Array | null;
  /** The bins [first, end) of the kernel's carried background sum (kernelSettings[10]). */
  private readonly carriedBins = new Int32Array(2);

  /**
   * `kernels`: update() after the first hop runs in WebAssembly (../dsp/gcc-kernels.ts, the same
   * results bit for bit); then the power and weights arrays given to update() must be the
   * kernels' too. `quiet`: update() also finds the bins that sound has left (quietList).
   */
  constructor(
    bins: number,
    private readonly settings: OnsetSettings,
    private readonly kernels: GccKernels | null = null,
    quiet: QuietSearch | null = null,
  ) {
    const f64 = (n: number) => (kernels ? kernels.f64(n) : new Float64Array(n));
    this.background = f64(bins);
    this.noise = f64(bins);
    this.smooth = f64(bins);
    this.held = quiet ? f64(bins) : new Float64Array(0);
    this.quietList = quiet ? (kernels ? kernels.i32(bins) : new Int32Array(bins)) : new Int32Array(0);
    this.quietAt = quiet ? quiet.quietRatio * NOISE_BIAS : 0;
    this.loudAt = quiet ? quiet.loudRatio * NOISE_BIAS : 0;
    this.heldDecay = quiet ? quiet.heldDecay : 0;
    this.invRise = 1 / (Math.max(1.0001, settings.fullRise) - 1);
    this.invPresence = 1 / (Math.max(1.0001, settings.fullPresence) - 1);
    // [10]: the sum of the background over the bins as the last hop left it, [11]: whether it is known.
    this.kernelSettings = kernels ? kernels.f64(12) : null;
    this.kernelSettings?.set([this.invRise, this.invPresence, settings.floor, 1 - settings.floor, settings.backgroundDecay, 1 - settings.backgroundDecay, settings.floorRise, this.quietAt, this.loudAt, this.heldDecay, 0, 0]);
    this.kernelCount = kernels ? kernels.i32(1) : null;
  }

  /** The bytes the kernels' memory needs for a weigher of this many bins (with a quiet search). */
  static kernelBytes(bins: number): number {
    return 4 * Math.ceil((8 * bins) / 16) * 16 + Math.ceil((4 * bins) / 16) * 16 + 128;
  }

  /**
   * Fill `weights` for bins [first, end) from the hop's per-bin power and return the hop's
   * onset strength in [0, 1] (power-weighted share of rising bins). With a quiet search, also
   * list the bins of [first, end) that sound has left (quietList, quietCount), against the noise
   * floor as this hop leaves it. A bin that has sat at its floor all along (a steady sound that
   * has become the floor) is not among them. Unlike presence, which looks at a smoothed power
   * that takes a few hops to fall after a loud call, this hop alone decides.
   */
  update(power: Float64Array, first: number, end: number, weights: Float64Array): number {
    const bg = this.background;
    const nf = this.noise;
    const sm = this.smooth;
    const { floor, backgroundDecay: d, floorRise } = this.settings;
    const invRise = this.invRise;
    const invPresence = this.invPresence;
    const held = this.held;
    const searching = held.length > 0;
    if (!this.primed) {
      for (let k = first; k < end; k++) {
        bg[k] = power[k]!;
        nf[k] = power[k]!;
        sm[k] = power[k]!;
        weights[k] = 0;
      }
      // The quiet search's held powers start at this hop's; no bin can have been left yet.
      if (searching) held.set(power.subarray(first, end), first);
      const ks = this.kernelSettings;
      if (ks) {
        // The kernel's carried sum of the background (bin by bin, in order, as its own pass would add it).
        let sum = 0;
        for (let k = first; k < end; k++) sum += bg[k]!;
        ks[10] = sum;
        ks[11] = 1;
        this.carriedBins[0] = first;
        this.carriedBins[1] = end;
      }
      this.primed = true;
      this.quietCount = 0;
      return 0;
    }
    if (this.kernels) {
      // The carried sum holds for the bins it was taken over only.
      if (first !== this.carriedBins[0] || end !== this.carriedBins[1]) {
        this.kernelSettings![11] = 0;
        this.carriedBins[0] = first;
        this.carriedBins[1] = end;
      }
      const onset = this.kernels.onsetUpdate(power, bg, nf, sm, weights, first, end, this.kernelSettings!, searching ? held : null, this.quietList, this.kernelCount!);
      this.quietCount = searching ? this.kernelCount![0]! : 0;
      return onset;
    }
    const list = this.quietList;
    const quietAt = this.quietAt;
    const loudAt = this.loudAt;
    const heldDecay = this.heldDecay;
    let tiny = 0;
    for (let k = first; k < end; k++) tiny += bg[k]!;
    tiny = (tiny / Math.max(1, end - first)) * 1e-6 + 1e-30;
    let rising = 0;
    let total = 0;
    let quiet = 0;
    for (let k = first; k < end; k++) {
      const p = power[k]!;
      const ratio = p / (bg[k]! + tiny);
      // Linear in the power ratio between no rise (1) and full rise (fullRise). The floor at 0
      // is (y + |y|) / 2, the same value as y > 0 ? y : 0 without a branch: in noise that test
      // goes either way at random, and its mispredictions cost more than the rest of the loop.
      const y = (ratio - 1) * invRise;
      let rise = (y + Math.abs(y)) * 0.5;
      if (rise > 1) rise = 1;
      const s = (sm[k] = SMOOTH * sm[k]! + (1 - SMOOTH) * p);
      const n = nf[k]!;
      const snr = s / (NOISE_BIAS * n + tiny);
      const z = (snr - 1) * invPresence;
      let presence = (z + Math.abs(z)) * 0.5;
      if (presence > 1) presence = 1;
      const m = (nf[k] = s < n ? s : n * floorRise);
      weights[k] = (floor + (1 - floor) * rise) * presence;
      rising += rise * p;
      total += p;
      bg[k] = d * bg[k]! + (1 - d) * p;
      if (searching) {
        // No division: the floor's mean is compared through the products.
        const h = held[k]! * heldDecay;
        held[k] = Math.max(p, h);
        // The index is always written and kept only when the bin qualifies (no branch on noise).
        list[quiet] = k;
        quiet += p < quietAt * m && h >= loudAt * m ? 1 : 0;
      }
    }
    this.quietCount = quiet;
    return total > 0 ? rising / total : 0;
  }

  /**
   * The bins of [first, end) that a much louder sound enters this hop, written to `out` (call
   * before update(), with the weights update() left the hop before): the power stands `heldRatio`
   * times over the largest power the bin held lately (so over its background too), and the bin
   * was not already rising the hop before (its weight below `risingWeight`: the first hops of one
   * onset are one arrival). Needs the quiet search (its held powers): without one, or before the
   * first update(), none. Returns how many were written.
   */
  listEntered(power: Float64Array, first: number, end: number, weights: Float64Array, out: Int32Array, heldRatio: number, risingWeight: number): number {
    const held = this.held;
    if (!this.primed || held.length === 0) return 0;
    let n = 0;
    for (let k = first; k < end; k++) {
      // The index is always written and kept only when the bin qualifies (no branch on noise).
      out[n] = k;
      n += power[k]! > heldRatio * held[k]! && weights[k]! < risingWeight ? 1 : 0;
    }
    return n;
  }

  /**
   * Signal-to-noise ratio of each band against its tracked noise floor, in dB (0 when the band
   * holds nothing above its floor): 10 log10(sum of this hop's power / sum of noise mean) over
   * the band's bins, where the noise mean is the tracked minimum times its bias factor. Call
   * after update() with the same hop's power.
   */
  bandSnrDb(bands: BandLayout, power: Float64Array, out: Float64Array): void {
    const nf = this.noise;
    for (let b = 0; b < bands.count; b++) {
      let s = 0;
      let n = 0;
      for (let k = bands.start[b]!; k < bands.end[b]!; k++) {
        s += power[k]!;
        n += nf[k]!;
      }
      out[b] = snrDbOfSums(s, n);
    }
  }

  /** bandSnrDb from the bands' sums of power and of the noise floor (the kernels' bandSums). */
  bandSnrDbOfSums(count: number, sumPower: Float64Array, sumNoise: Float64Array, out: Float64Array): void {
    for (let b = 0; b < count; b++) out[b] = snrDbOfSums(sumPower[b]!, sumNoise[b]!);
  }

  /** Per bin, the largest power it held lately, decaying (the quiet search's; empty without one; read-only). */
  get heldPower(): Float64Array {
    return this.held;
  }

  /**
   * Does bin k's power this hop (power[k]) stand over its noise mean, the tracked minimum times
   * its bias factor (the mean bandSnrDb measures against)? A bin not over it holds no sound now.
   */
  overNoiseMean(power: Float64Array, k: number): boolean {
    return power[k]! > NOISE_BIAS * this.noise[k]!;
  }

  /** The noise floor per bin (the kernels read it; read-only). */
  get noiseFloor(): Float64Array {
    return this.noise;
  }
}

/** A band's SNR in dB from its sums of power and of the noise floor (0 when not above the floor's mean). */
function snrDbOfSums(s: number, n: number): number {
  const ratio = s / (NOISE_BIAS * n + 1e-30);
  return ratio > 1 ? 10 * Math.log10(ratio) : 0;
}

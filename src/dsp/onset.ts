/**
 * Onset weighting (the precedence idea: the direct path arrives first, reflections later).
 * Per frequency bin, the power of the current hop is compared with a slow average of the
 * hops before it. A sharp rise gets full weight 1; steady or decaying sound gets the floor
 * weight. Pure state machine: one call per hop, no allocation.
 */
export interface OnsetSettings {
  /** Weight of steady sound, in [0, 1]; 1 switches onset weighting off. */
  readonly floor: number;
  /** Rise (power ratio) that earns full weight; e.g. 4 = 6 dB within one hop. */
  readonly fullRise: number;
  /** Smoothing factor per hop of the background power average, in [0, 1). */
  readonly backgroundDecay: number;
}

export class OnsetWeigher {
  private readonly background: Float64Array;
  private primed = false;
  private readonly invRise: number;

  constructor(
    bins: number,
    private readonly settings: OnsetSettings,
  ) {
    this.background = new Float64Array(bins);
    this.invRise = 1 / (Math.max(1.0001, settings.fullRise) - 1);
  }

  /**
   * Fill `weights` for bins [first, end) from the hop's per-bin power and return the hop's
   * onset strength in [0, 1] (power-weighted share of rising bins).
   */
  update(power: Float64Array, first: number, end: number, weights: Float64Array): number {
    const bg = this.background;
    const { floor, backgroundDecay: d } = this.settings;
    let rising = 0;
    let total = 0;
    if (!this.primed) {
      for (let k = first; k < end; k++) {
        bg[k] = power[k]!;
        weights[k] = 1;
      }
      this.primed = true;
      return 0;
    }
    let tiny = 0;
    for (let k = first; k < end; k++) tiny += bg[k]!;
    tiny = (tiny / Math.max(1, end - first)) * 1e-6 + 1e-30;
    for (let k = first; k < end; k++) {
      const p = power[k]!;
      const ratio = p / (bg[k]! + tiny);
      // Linear in the power ratio between no rise (1) and full rise (fullRise).
      let rise = ratio > 1 ? (ratio - 1) * this.invRise : 0;
      if (rise > 1) rise = 1;
      weights[k] = floor + (1 - floor) * rise;
      rising += rise * p;
      total += p;
      bg[k] = d * bg[k]! + (1 - d) * p;
    }
    return total > 0 ? rising / total : 0;
  }
}

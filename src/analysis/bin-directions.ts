/**
 * Directions per frequency bin: callers that sound at once, heard apart where their spectra do.
 *
 * The band fusion (./band-fusion.ts) decides between the direction search's candidates band by
 * band. A quieter caller whose call shares its bands with a louder one is then not heard: the
 * louder caller wins every band (it also fills the few bins of a tonal call's band), and a
 * caller that is a candidate at all has its lags refined on bands the louder one fills, which
 * bends it towards the louder one (a chorus at -67 degrees read at -45 while a second chorus at
 * 13 called). Bins are far narrower: two calls rarely fill the same bin at once (the
 * time-frequency sparsity that source separation by bin masks relies on, common practice;
 * e.g. Yilmaz and Rickard 2004, DUET). So every bin low enough that a pair's delay follows
 * from its phase alone (no spatial aliasing: the pair's lag limit below n / 2k samples) gives a
 * direction of its own, fitted by least squares over the pairs that qualify; the bins' evidence
 * (the band's evidence shared by weight, times the squared coherence of the bin over the
 * pairs: a bin two callers fill at once has a smeared phase) is summed into an azimuth
 * histogram, whose peaks are directions the hop holds.
 *
 * Above every pair's aliasing limit (a 20 cm square: 770 Hz; a 10 cm one: 1.5 kHz) there is no
 * bin direction and the band fusion alone speaks.
 *
 * Pure: arrays in, numbers out; no allocation per hop.
 */
import type { PairCorrelator } from '../dsp/gcc.js';
import type { Direction, DirectionModel } from '../direction/direction-model.js';
import { wrapDeg as wrap } from '../geometry/vec3.js';
import { fastAtan2 } from '../util/fast-atan2.js';

/** A pair's lag limit must be below this share of n / 2k for bin k to read its delay from the phase. */
const UNALIASED_SHARE = 0.9;
/** At most this many pairs read a bin (more cost time and add little to a direction from a few bins). */
const MAX_BIN_PAIRS = 6;
/**
 * No bin above this frequency, Hz, for time: only a 5 cm circle's shortest pairs are free of
 * aliasing that high (the other presets stop at 0.8-1.7 kHz). Raised from 2 kHz so that a high
 * sweep crossing a broadband caller is heard apart on the circle too. Motion matrix, ten draws
 * (sources >= 80 % complete summed / id switches / tracks holding two): 841 / 61 / 15 -> 841 / 60
 * / 14, held out 2718 81 -> 86 %, the accuracy matrix the same; the 8-mic circle's hop 103 -> 113
 * us, the 6-mic one's 81 -> 86 us (core bench, one run each).
 */
const BIN_MAX_HZ = 4000;
/**
 * Azimuth histogram step, degrees, and the half width of a peak: a peak's direction is the
 * evidence-weighted mean of the bins within PEAK_HALF_WIDTH_DEG of it. Narrowed from 4 and 8
 * deg: a tonal caller 17 deg from a broadband one that called through it lay in the broadband
 * one's peak (its bins read 10-16 deg off its bearing, towards the other caller) and was heard
 * within 3 deg on 20 hops; now on 40 (test/analysis/bin-directions.test.ts). In the motion matrix'
 * crossings the tone was the caller lost most (a tone against a broadband caller: 48-50 % of the
 * tones 80 % complete, over 23 draws). Motion matrix (sources >= 80 % complete summed / id
 * switches / tracks holding two), the ten draws, the three held out and ten more: 2126 / 115 / 36
 * -> 2117 / 135 / 28 (crossings 1717 / 57 / 24 -> 1734 / 51 / 15), and on ten further draws 887 /
 * 114 / 25 -> 888 / 100 / 25: about even but for fewer tracks holding two. The accuracy matrix:
 * within 5 deg 84.1 -> 84.2 %, confident-and-wrong 0.66 -> 0.69 % of hops. Steps of 2 with peaks
 * 6 wide (2115 / 132 / 29) or with peaks a step apart merged within 8 deg (2115 / 139 / 30), and
 * steps of 3 with peaks 6 wide (crossings 1693 / 55 / 18): no better.
 */
const HIST_STEP_DEG = 2;
const HIST_SIZE = 360 / HIST_STEP_DEG;
const PEAK_HALF_WIDTH_DEG = 5;
/** Most peaks kept per hop. */
export const MAX_BIN_PEAKS = 4;
/** A peak holds at least this share of the hop's bin evidence (fewer: stray bins) ... */
const PEAK_MIN_SHARE = 0.15;
/**
 * ... or this share when its bins lie in at least SEVERAL_RUNS runs of two or more neighbouring
 * bins. A call's own bins come in runs (a tone fills two or three bins round each harmonic under
 * the Hann window, a broadband call whole stretches), and two runs far apart in frequency that
 * read one direction are a caller; bins that read a blend of two callers lie alone between their
 * harmonics. Such a peak is how a passer calling with a chorus is heard: in the motion matrix's
 * draw 1313, cho02 (10 cm tetrahedron), the passer's harmonics at 750-800 and 1125-1270 Hz read
 * 93-98 deg (truth 94) in two runs of two and three or four bins, a peak of 1.2-1.3 against the
 * chorus' 3.9-6.2 (its partials and pulse sidebands fill about three times as many bins).
 */
const RUNS_MIN_SHARE = 0.05;
export const SEVERAL_RUNS = 2;
/** Two peaks whose refined directions lie this near are one. */
const SAME_PEAK_DEG = HIST_STEP_DEG;

export class BinDirections {
  /** Whether any bin qualifies (at least one set of unaliased pairs spans the array's directions). */
  readonly active: boolean;
  /** This hop's peaks, best first: azimuth, elevation (NaN when the array gives none), evidence. */
  readonly peakAz = new Float64Array(MAX_BIN_PEAKS);
  readonly peakEl = new Float64Array(MAX_BIN_PEAKS);
  readonly peakMass = new Float64Array(MAX_BIN_PEAKS);
  /** Per peak: how many runs of two or more neighbouring bins its bins make (a tone's harmonics, a broadband call's stretches). */
  readonly peakRuns = new Int32Array(MAX_BIN_PEAKS);
  peakCount = 0;
  /** One past the highest bin that gives a direction. */
  readonly endBin: number;
  private readonly k0: number;
  /** Per bin (from k0): index into maskPairs and handles of the pairs it reads, -1 when none span. */
  private readonly maskOf: Int32Array;
  /** Per mask: the pairs it reads, in order. */
  private readonly maskPairs: Int32Array[];
  /** Per bin (from k0): -n / (2 pi k), from a pair's phase at bin k (radians) to its lag (samples). */
  private readonly toLag: Float64Array;
  /** The direction model's handle of each mask's least squares (prepareSubset). */
  private readonly handles: number[] = [];
  private readonly lags: Float64Array;
  private readonly binAz: Float64Array;
  private readonly binEl: Float64Array;
  private readonly binMass: Float64Array;
  private readonly hist = new Float64Array(HIST_SIZE);
  private readonly smooth = new Float64Array(HIST_SIZE);
  private readonly dir: Direction = { azimuthDeg: 0, elevationDeg: null };

  constructor(
    private readonly model: DirectionModel,
    n: number,
    sampleRate: number,
    firstBin: number,
    endBin: number,
  ) {
    endBin = Math.min(endBin, Math.ceil((BIN_MAX_HZ / sampleRate) * n));
    const P = model.pairs.length;
    this.k0 = Math.max(1, firstBin);
    this.lags = new Float64Array(P);
    const keys = new Map<string, number>();
    this.maskPairs = [];
    const maskOf: number[] = [];
    let last = this.k0;
    // Longest pairs first: of those unaliased at a bin, the MAX_BIN_PAIRS longest read it (the
    // finest delays; an 8-mic circle has 28 pairs).
    const byLength = Array.from({ length: P }, (_, p) => p).sort((a, b) => model.lagLimit[b]! - model.lagLimit[a]!);
    for (let k = this.k0; k < endBin; k++) {
      const use = new Uint8Array(P);
      let taken = 0;
      for (const p of byLength) {
        if (taken < MAX_BIN_PAIRS && model.lagLimit[p]! < (UNALIASED_SHARE * n) / (2 * k)) {
          use[p] = 1;
          taken++;
        }
      }
      const key = use.join('');
      let m = keys.get(key);
      if (m === undefined) {
        const handle = model.prepareSubset(use);
        m = handle < 0 ? -1 : this.maskPairs.push(Int32Array.from({ length: P }, (_, p) => p).filter((p) => use[p] === 1)) - 1;
        if (m >= 0) this.handles.push(handle);
        keys.set(key, m);
      }
      maskOf.push(m);
      if (m >= 0) last = k + 1;
    }
    this.endBin = last;
    this.maskOf = Int32Array.from(maskOf.slice(0, last - this.k0));
    this.active = this.maskPairs.length > 0;
    const bins = Math.max(0, this.endBin - this.k0);
    this.toLag = Float64Array.from({ length: bins }, (_, i) => -n / (2 * Math.PI * (this.k0 + i)));
    this.binAz = new Float64Array(bins);
    this.binEl = new Float64Array(bins);
    this.binMass = new Float64Array(bins);
  }

  /**
   * This hop's bin directions and peaks, from the pair memories (correlators), the bins' weight
   * memory and each bin's share of its band's evidence (binScale: evidence / band weight).
   * Returns the peak count.
   */
  analyse(correlators: readonly PairCorrelator[], weightAcc: Float64Array, binScale: Float64Array): number {
    this.hist.fill(0);
    this.peakCount = 0;
    let total = 0;
    const lags = this.lags;
    for (let k = this.k0; k < this.endBin; k++) {
      const i = k - this.k0;
      this.binMass[i] = 0;
      const m = this.maskOf[i]!;
      const w = weightAcc[k]!;
      const base = binScale[k]! * w;
      if (m < 0 || !(base > 0)) continue;
      const pairs = this.maskPairs[m]!;
      const used = pairs.length;
      let coh = 0;
      const toLag = this.toLag[i]!;
      for (let j = 0; j < used; j++) {
        const pc = correlators[pairs[j]!]!;
        const re = pc.accRe[k]!;
        const im = pc.accIm[k]!;
        coh += Math.sqrt(re * re + im * im);
        lags[pairs[j]!] = fastAtan2(im, re) * toLag;
      }
      coh /= used * w;
      if (!(coh > 0) || !this.model.solveSubset(this.handles[m]!, lags, this.dir)) continue;
      const mass = base * Math.min(1, coh * coh);
      const az = this.dir.azimuthDeg;
      this.binAz[i] = az;
      this.binEl[i] = this.dir.elevationDeg ?? NaN;
      this.binMass[i] = mass;
      total += mass;
      this.hist[histIndex(az)] += mass;
    }
    if (!(total > 0)) return 0;
    this.findPeaks(total);
    return this.peakCount;
  }

  /** Local maxima of the 3-bin smoothed histogram holding RUNS_MIN_SHARE, each refined on its bins and kept best first (addPeak). */
  private findPeaks(total: number): void {
    const h = this.hist;
    const s = this.smooth;
    // Neighbours round the circle by index tests, not remainders (the same sums, in the same order).
    const last = HIST_SIZE - 1;
    for (let i = 0; i < HIST_SIZE; i++) s[i] = h[i === 0 ? last : i - 1]! + h[i]! + h[i === last ? 0 : i + 1]!;
    const least = RUNS_MIN_SHARE * total;
    const plain = PEAK_MIN_SHARE * total;
    // Of the maxima below PEAK_MIN_SHARE (a peak of runs at best) only the two highest are
    // looked at: each look is a pass over the bins, and noise has many small maxima.
    let low1 = -1;
    let low2 = -1;
    for (let i = 0; i < HIST_SIZE; i++) {
      const v = s[i]!;
      if (!(v >= least) || !(v > s[i === 0 ? last : i - 1]!) || !(v >= s[i === last ? 0 : i + 1]!)) continue;
      if (v >= plain) this.addPeak(-180 + (i + 0.5) * HIST_STEP_DEG, total);
      else if (low1 < 0 || v > s[low1]!) {
        low2 = low1;
        low1 = i;
      } else if (low2 < 0 || v > s[low2]!) low2 = i;
    }
    if (low1 >= 0) this.addPeak(-180 + (low1 + 0.5) * HIST_STEP_DEG, total);
    if (low2 >= 0) this.addPeak(-180 + (low2 + 0.5) * HIST_STEP_DEG, total);
  }

  /**
   * The evidence-weighted mean direction of the bins near centre (degrees), inserted in order of
   * evidence, when it holds PEAK_MIN_SHARE of the hop's bin evidence (total) or RUNS_MIN_SHARE
   * in SEVERAL_RUNS runs.
   */
  private addPeak(centre: number, total: number): void {
    let mass = 0;
    let runs = 0;
    let run = 0;
    let off = 0;
    let elSum = 0;
    let elMass = 0;
    for (let i = 0; i < this.binMass.length; i++) {
      const m = this.binMass[i]!;
      const d = m > 0 ? wrap(this.binAz[i]! - centre) : Infinity;
      if (!(Math.abs(d) <= PEAK_HALF_WIDTH_DEG)) {
        // a bin outside the peak ends a run of its bins
        if (run >= 2) runs++;
        run = 0;
        continue;
      }
      run++;
      mass += m;
      off += m * d;
      const el = this.binEl[i]!;
      if (el === el) {
        elSum += m * el;
        elMass += m;
      }
    }
    if (run >= 2) runs++;
    if (!(mass > 0) || (mass < PEAK_MIN_SHARE * total && runs < SEVERAL_RUNS)) return;
    const az = wrap(centre + off / mass);
    // Two histogram maxima a step apart can refine to one direction: keep the heavier.
    for (let j = 0; j < this.peakCount; j++) {
      if (Math.abs(wrap(this.peakAz[j]! - az)) >= SAME_PEAK_DEG) continue;
      if (this.peakMass[j]! >= mass) return;
      this.removePeak(j);
      break;
    }
    let pos = Math.min(this.peakCount, MAX_BIN_PEAKS - 1);
    if (this.peakCount === MAX_BIN_PEAKS && !(mass > this.peakMass[pos]!)) return;
    while (pos > 0 && this.peakMass[pos - 1]! < mass) {
      this.copyPeak(pos - 1, pos);
      pos--;
    }
    this.peakAz[pos] = az;
    this.peakEl[pos] = elMass > 0 ? elSum / elMass : NaN;
    this.peakMass[pos] = mass;
    this.peakRuns[pos] = runs;
    if (this.peakCount < MAX_BIN_PEAKS) this.peakCount++;
  }

  /** Drop peak j (the later ones move up). */
  private removePeak(j: number): void {
    for (let i = j + 1; i < this.peakCount; i++) this.copyPeak(i, i - 1);
    this.peakCount--;
  }

  /** Peak `from` written over peak `to`. */
  private copyPeak(from: number, to: number): void {
    this.peakAz[to] = this.peakAz[from]!;
    this.peakEl[to] = this.peakEl[from]!;
    this.peakMass[to] = this.peakMass[from]!;
    this.peakRuns[to] = this.peakRuns[from]!;
  }
}

function histIndex(az: number): number {
  const i = Math.floor((wrap(az) + 180) / HIST_STEP_DEG);
  return i >= HIST_SIZE ? HIST_SIZE - 1 : i < 0 ? 0 : i;
}

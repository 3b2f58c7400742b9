/**
 * Watched directions: a caller the tracker follows, looked for where a louder caller fills the
 * hop.
 *
 * Two callers that call at once are often heard as one: the louder (or the broader) one wins
 * every band of the fusion (./band-fusion.ts), a call above the array's spatial-aliasing limit
 * lies above the bins that give a direction of their own (./bin-directions.ts), and the
 * quieter caller's track coasts through its call. Yet many single bins of the hop's own spectra
 * are still filled by one caller alone (two calls rarely fill the same bin at once: the
 * time-frequency sparsity of source separation by bin masks, common practice; e.g. Yilmaz and
 * Rickard 2004, DUET). At a high frequency a bin's phases fit several directions (the aliased
 * lobes), so the bins alone cannot say which; the tracker can, as it knows where the caller it
 * follows should be now. So for each watched direction (a confirmed track's prediction, handed
 * in by the tracking session, src/track/tracking-session.ts) this hop's bins that do not fit
 * the winner (WINNER_FIT) are tested against the azimuths within the track's gate around the
 * prediction (at most MAX_HALF_DEG either side, where the presets have at most one lobe); the
 * azimuth that the most bin evidence fits closely (WATCH_FIT) is where the watched caller is
 * heard, when at least WATCH_MIN_BINS bins holding WATCH_SHARE of the evidence of all the bins
 * that do not fit the winner fit it. A room's reflections, or a lobe of the winner's, fit a
 * direction in a few scattered bins of that evidence (3-5 bins, 5-15 % of it: measured on the
 * accuracy matrix's rooms); a second caller fills many (8-30 bins, 30-60 %: its crossings).
 * The finds are made heaviest first, and a bin one find takes is not another's: a high caller's
 * bins fit its own direction and an aliased lobe of it, where another track may be watched (a
 * track born of a chorus' lobe, test/accuracy/motion-cells.test.ts, found the other chorus'
 * bins there, stayed awake on those events and later took a passer's call). Leaving out the bins
 * of every further source the hop reports too (not only the winner's) lost 4 sources >= 80 %
 * complete over the motion matrix's 13 draws; not kept.
 *
 * A watched caller may also be the winner itself, read at an aliased lobe. Above an array's
 * aliasing limit a narrow-band call (one hop of a sweep holds a few hundred Hz) fits its own
 * direction and its grating lobes alike (for mics on a grid of spacing d, the lobes lie at the
 * direction's unit vector plus multiples of wavelength / d along the grid's axes: common
 * practice), and the band fusion picks one of them on margins of a few hundredths of coherence:
 * a high sweep passing a 20 cm square at 60 deg/s, heard at -22 deg, was read at 12 deg and 18 deg
 * up for whole calls (motion matrix draw 6060, pas15; numpy on the raw frame fits the two within
 * 0.3 %). So the bins that fit the winner are also tested near each watched direction (over a
 * wider window and a few elevations: ALIAS_MAX_HALF_DEG): when
 * ALIAS_SHARE of their evidence fits one there, and the direction halfway between it and the
 * winner fits less than ALIAS_DIP of that (a separate lobe, not one wide beam: the bins of a low
 * call on a 10 cm tetrahedron read at -45 deg fitted -77 as well, held-out motion matrix draw
 * 4040, crs06; without this test that cell's second caller lost half its calls), the watched
 * direction is an alias of the winner (aliasAz): the same sound, which the hop cannot place
 * between the two, and which the tracker gives to the watched track only when no track explains
 * the winner (src/track/tracker.ts).
 * Chosen on the motion matrix (ten draws, sources >= 80 % complete summed / id switches / tracks
 * holding two; 897 / 43 / 10 without aliases): share 0.8 and 0.9 without the halfway test 899 /
 * 45 / 10 and 899 / 42 / 10 (crossings 691 -> 700, but 4040 crs06 b 78 -> 44 %); with it, share
 * 0.8 897 / 45 / 10 (the high sweep at 80 deg/s on a 20 cm square, pas15: 4242 83 -> 100 %, 2718
 * 89 -> 100 %, 9999 71 -> 86 %; two more id switches of passers in chorus cells), share 0.7 895 /
 * 43 / 10 (2027 cho02's passer 92 -> 58 %).
 *
 * Each bin is read from this hop's spectra, not the analysis' memory: the memory of a bin the
 * louder caller filled a moment ago still holds its phase. Motion matrix, crossing cells of 13
 * draws (sources >= 80 % complete of 155): 82 without the watch; 92 read from the memory; 111 from
 * the hop's spectra, but then the accuracy matrix's rooms gave 1.51 events per call against 1.39
 * (a lobe-born track found its lobe in reflections every hop); with WATCH_MIN_BINS and
 * WATCH_SHARE 1.39 again, and 100 (share 0.3 with 6 bins: 98). With the final settings (the
 * hop analyzer's WATCH_APART_DEG, the tracker's WATCH_CLEAR_DEG) 93 of 155, and share 0.1 97, but
 * the chorus cells of ten draws then had 14 id switches and 11 tracks holding two against 8 and
 * 5 (a chorus track took a passer's calls), and the accuracy matrix 1.17 events per call.
 *
 * Pure: arrays in, numbers out; no allocation per hop.
 */
import type { DirectionModel } from '../direction/direction-model.js';
import type { FftBuffer } from '../dsp/fft.js';
import { unitCrossInto } from '../dsp/gcc.js';
import { wrapDeg } from '../geometry/vec3.js';
import { fastAtan2 } from '../util/fast-atan2.js';
import type { OnsetWeigher } from '../dsp/onset.js';

/** Most watched directions per hop. */
export const MAX_WATCHED = 4;
/**
 * Azimuths within the watched track's gate (its half-width, from the tracker) either side of its
 * prediction are tested, at least MIN_HALF_DEG and at most MAX_HALF_DEG: wider, a chorus track
 * watched through its pause took a passer's call 10 degrees off it.
 */
const MIN_HALF_DEG = 6;
const MAX_HALF_DEG = 10;
/**
 * The test for an aliased lobe of the winner (aliasOf) looks up to ALIAS_MAX_HALF_DEG either side
 * of the prediction (within the track's gate), and at the watched elevation and ALIAS_EL_STEPS
 * steps of ALIAS_EL_STEP_DEG above and below it: the lobe is a place of the winner's own bins,
 * whose sound the track claims only when it lies nearer its prediction than the winner
 * (src/track/tracker.ts, resolveAliases), so a wider window cannot hand it another caller's sound.
 * Above the aliasing limit a bin fits a direction only within a few degrees of elevation too: a
 * high sweep passing a 20 cm square 4 m up (motion matrix draw 1313, pas15) was watched at 10 deg
 * up while its own hops read it at 17-20 deg; at 10 deg its caller's place lies about 0.1 of a
 * period off on the 28 cm diagonal at 3 kHz (horizontal parts cos 10 / cos 20 deg: 5 % longer), a
 * phase error near 40 deg, and the alias was not found there. Chosen on the motion matrix' pass
 * cells, 33 draws (the high sweep at 80 deg/s on the 20 cm square, pas15: mean completeness / id
 * switches / draws >= 80 % complete; all 528 pass cells within the targets / id switches). Before
 * (window 10 deg, one elevation, the tracker choosing no alias by cost): 70.4 % / 27 / 19, 507 /
 * 62. With the choice by cost: window 10 deg, one elevation 73.3 % / 25 / 21, 509 / 60; window 30
 * deg 74.8 % / 24 / 22, 510 / 59; window 30 deg and elevations +-15 deg 77.3 % / 21 / 21, 509 / 56
 * (kept); +-20 deg 77.5 % / 20 / 21, 509 / 55; window 20 deg with +-15 deg 73.5 % / 26 / 20; window
 * 45 deg as 30.
 */
const ALIAS_MAX_HALF_DEG = 30;
const ALIAS_EL_STEP_DEG = 5;
const ALIAS_EL_STEPS = 3;
/** Coarse step of the test, degrees ... */
const COARSE_STEP_DEG = 2;
/** ... the best coarse azimuth then refined this far either side. */
const REFINE_DEG = 1;
/** A bin that fits the winner this well (mean over pairs of the cosine of the phase error) is the winner's. */
const WINNER_FIT = 0.5;
/** A bin fits a tested direction when the mean cosine of its pairs' phase errors reaches this. */
const WATCH_FIT = 0.85;
/** The direction found must be fitted by at least this many bins ... */
const WATCH_MIN_BINS = 5;
/** ... holding this share of the evidence of the bins that do not fit the winner. */
const WATCH_SHARE = 0.2;
/**
 * A watched direction is an alias of the winner when it is fitted by this share of the evidence
 * of the bins that fit the winner ...
 */
const ALIAS_SHARE = 0.8;
/** ... and the direction halfway between it and the winner by less than this share of what fits it. */
const ALIAS_DIP = 0.5;
/** Most bins kept per hop and kind (the heaviest that do not fit the winner; the heaviest that do). */
const MAX_BINS = 96;

/** Bins of one hop kept for the tests: bin, evidence, and per pair (index i * P + p) the phase of its unit cross-spectrum. */
class HopBins {
  readonly bin = new Int32Array(MAX_BINS);
  readonly mass = new Float64Array(MAX_BINS);
  readonly phase: Float64Array;
  /** The kept bins, heaviest first (sortByMass): a direction's test stops sooner on a miss. */
  readonly order = new Int32Array(MAX_BINS);
  count = 0;
  total = 0;

  constructor(private readonly P: number) {
    this.phase = new Float64Array(MAX_BINS * P);
  }

  /** Fill `order` with the kept bins, heaviest first (insertion sort: at most MAX_BINS). */
  sortByMass(): void {
    const order = this.order;
    const mass = this.mass;
    for (let i = 0; i < this.count; i++) {
      let j = i;
      while (j > 0 && mass[order[j - 1]!]! < mass[i]!) {
        order[j] = order[j - 1]!;
        j--;
      }
      order[j] = i;
    }
  }

  clear(): void {
    this.count = 0;
    this.total = 0;
  }

  /** Keep bin k, with per pair the unit cross-spectrum (re, im), among the heaviest MAX_BINS (the lightest makes room). */
  keep(k: number, mass: number, re: Float64Array, im: Float64Array): void {
    const P = this.P;
    let i = this.count;
    if (i === MAX_BINS) {
      let light = 0;
      for (let j = 1; j < MAX_BINS; j++) if (this.mass[j]! < this.mass[light]!) light = j;
      if (!(mass > this.mass[light]!)) return;
      this.total -= this.mass[light]!;
      i = light;
    } else this.count++;
    this.total += mass;
    this.bin[i] = k;
    this.mass[i] = mass;
    for (let p = 0; p < P; p++) this.phase[i * P + p] = fastAtan2(im[p]!, re[p]!);
  }
}

export class WatchedDirections {
  /** This hop's finds, per watched direction: azimuth (NaN when not heard) and the evidence of its bins. */
  readonly foundAz = new Float64Array(MAX_WATCHED);
  readonly foundMass = new Float64Array(MAX_WATCHED);
  /** Per watched direction: where the winner's own bins fit as well (an aliased lobe; NaN: none), and the share of their evidence that fits there. */
  readonly aliasAz = new Float64Array(MAX_WATCHED);
  readonly aliasShare = new Float64Array(MAX_WATCHED);
  /** The directions to look for in the next hop: azimuth, elevation (0 when unknown) and the half-width of the test. */
  private readonly watchAz = new Float64Array(MAX_WATCHED);
  private readonly watchEl = new Float64Array(MAX_WATCHED);
  private readonly watchHalf = new Float64Array(MAX_WATCHED);
  private readonly aliasHalf = new Float64Array(MAX_WATCHED);
  watchCount = 0;
  private readonly P: number;
  /** Per pair: the winner's phasor at the current bin and its step from bin to bin. */
  private readonly stepRe: Float64Array;
  private readonly stepIm: Float64Array;
  private readonly curRe: Float64Array;
  private readonly curIm: Float64Array;
  /** Per pair: this bin's unit cross-spectrum. */
  private readonly re: Float64Array;
  private readonly im: Float64Array;
  /** The bins that do not fit the winner, and those that do. */
  private readonly foreign: HopBins;
  private readonly own: HopBins;
  /** Per foreign bin: 1 once a find took it. */
  private readonly used = new Uint8Array(MAX_BINS);
  /** Per watched direction: done (its find made, or none), and its best azimuth and mass in the current round. */
  private readonly done = new Uint8Array(MAX_WATCHED);
  private readonly bestAz = new Float64Array(MAX_WATCHED);
  private readonly bestMass = new Float64Array(MAX_WATCHED);
  private readonly lags: Float64Array;
  /**
   * The lowest bin that some pair cannot place by its phase alone (its lag limit reaches half
   * the bin's period: DirectionModel.lagLimit). Below it every pair is unaliased and the array
   * has no grating lobes (what the winner's bins fit far from it there is its own wide beam,
   * which the test's halfway dip is for), so the alias test is skipped when no bin of the
   * winner's lies at or above it: less work in choruses of low callers (the motion matrix' 23
   * draws gave the same figures in every cell with and without the skip).
   */
  private readonly aliasFromBin: number;
  /** This hop's highest bin that fits the winner (-1: none). */
  private ownTop = -1;
  /** Bins that fitted the last direction fitMass tested. */
  private fitted = 0;
  /** The best azimuth and its evidence of the last nearBest (NaN and 0 when none). */
  private nearAz = NaN;
  private nearMass = 0;
  private nearEl = 0;

  constructor(
    private readonly model: DirectionModel,
    private readonly n: number,
    private readonly firstBin: number,
    private readonly endBin: number,
  ) {
    const P = model.pairs.length;
    this.P = P;
    this.stepRe = new Float64Array(P);
    this.stepIm = new Float64Array(P);
    this.curRe = new Float64Array(P);
    this.curIm = new Float64Array(P);
    this.re = new Float64Array(P);
    this.im = new Float64Array(P);
    this.foreign = new HopBins(P);
    this.own = new HopBins(P);
    this.lags = new Float64Array(P);
    let longest = 0;
    for (let p = 0; p < P; p++) longest = Math.max(longest, model.lagLimit[p]!);
    this.aliasFromBin = longest > 0 ? n / (2 * longest) : Infinity;
  }

  /** The directions to look for in the next hop (at most MAX_WATCHED): azimuth, elevation (NaN: unknown) and half-width (degrees) of each. */
  setWatched(az: ArrayLike<number>, el: ArrayLike<number>, half: ArrayLike<number>, count: number): void {
    const m = Math.min(count, MAX_WATCHED);
    for (let i = 0; i < m; i++) {
      this.watchAz[i] = az[i]!;
      this.watchEl[i] = el[i]! === el[i]! ? el[i]! : 0;
      const h = Math.round(half[i]! / COARSE_STEP_DEG) * COARSE_STEP_DEG;
      this.watchHalf[i] = h >= MIN_HALF_DEG ? Math.min(MAX_HALF_DEG, h) : MIN_HALF_DEG;
      this.aliasHalf[i] = h >= MIN_HALF_DEG ? Math.min(ALIAS_MAX_HALF_DEG, h) : MIN_HALF_DEG;
    }
    this.watchCount = m;
  }

  /** The elevation watched direction w was looked for at (degrees; 0 when the tracker gave none). */
  elevationOf(w: number): number {
    return this.watchEl[w]!;
  }

  /** Nothing to look for (until setWatched). */
  clear(): void {
    this.watchCount = 0;
  }

  /**
   * Look for the watched directions in this hop's spectra (per channel, bin k at [2k], [2k + 1])
   * and their inverse magnitudes (invMag, per channel: the analysis' PHAT weights), given the
   * winner's lags (samples), this hop's bin weights (a bin without weight holds
   * nothing new), the bins' weight memory, each bin's share of its band's evidence
   * (binScale: a bin's evidence is binScale x its weight memory, as in ./bin-directions.ts), and
   * this hop's power per bin with the onset weigher that tracks its noise floor (../dsp/onset.ts:
   * a bin not over its noise mean holds no caller now; see collectBins), and the winner's azimuth
   * and elevation (degrees; elevation 0 when it has none), and how far from the winner's azimuth
   * the caller keeps a find (apartDeg: a watched direction whose whole window lies nearer is not
   * tested for an alias).
   * Fills foundAz / foundMass and aliasAz / aliasShare for each watched direction; returns the
   * watched count.
   */
  search(spectra: readonly FftBuffer[], invMag: readonly Float64Array[], winnerLags: Float64Array, weights: Float64Array, weightAcc: Float64Array, binScale: Float64Array, power: Float64Array, onset: OnsetWeigher, winnerAz: number, winnerEl: number, apartDeg: number): number {
    const m = this.watchCount;
    this.foundAz.fill(NaN);
    this.foundMass.fill(0);
    this.aliasAz.fill(NaN);
    this.aliasShare.fill(0);
    if (m === 0) return 0;
    this.collectBins(spectra, invMag, winnerLags, weights, weightAcc, binScale, power, onset);
    for (let w = 0; w < m; w++) if (Math.abs(wrapDeg(this.watchAz[w]! - winnerAz)) + this.aliasHalf[w]! + REFINE_DEG > apartDeg) this.aliasOf(w, winnerAz, winnerEl);
    const foreign = this.foreign;
    if (foreign.count < WATCH_MIN_BINS) return m;
    // The heaviest find first; the bins it takes are not the others' (one caller's bins fit its
    // own direction and, at a high frequency, an aliased lobe of it where another track may be).
    this.used.fill(0, 0, foreign.count);
    this.done.fill(0);
    for (let round = 0; round < m; round++) {
      let pick = -1;
      for (let w = 0; w < m; w++) {
        if (this.done[w] === 1) continue;
        this.nearBest(w, foreign, this.used);
        this.bestAz[w] = this.nearAz;
        this.bestMass[w] = this.nearMass;
        if (this.bestMass[w]! > 0 && (pick < 0 || this.bestMass[w]! > this.bestMass[pick]!)) pick = w;
      }
      if (pick < 0 || this.bestMass[pick]! < WATCH_SHARE * foreign.total) break;
      this.done[pick] = 1;
      this.foundAz[pick] = wrapDeg(this.bestAz[pick]!);
      this.foundMass[pick] = this.bestMass[pick]!;
      this.fitMass(foreign, this.used, this.bestAz[pick]!, this.watchEl[pick]!, true);
    }
    return m;
  }

  /** Is watched direction w an aliased lobe of the winner, at (winAz, winEl) (see above)? Sets aliasAz / aliasShare. */
  private aliasOf(w: number, winAz: number, winEl: number): void {
    const own = this.own;
    if (own.count < WATCH_MIN_BINS || !(own.total > 0) || this.ownTop < this.aliasFromBin) return;
    this.nearBest(w, own, null, ALIAS_SHARE * own.total, this.aliasHalf[w]!, ALIAS_EL_STEPS);
    const az = this.nearAz;
    const mass = this.nearMass;
    if (!(mass >= ALIAS_SHARE * own.total)) return;
    const el = this.nearEl;
    if (this.fitMass(own, null, winAz + wrapDeg(az - winAz) / 2, (winEl + el) / 2, false) >= ALIAS_DIP * mass) return;
    this.aliasAz[w] = wrapDeg(az);
    this.aliasShare[w] = mass / own.total;
  }

  /**
   * The best azimuth near watched direction w (within `half` degrees, coarse then a degree either
   * side; at its elevation and `elSteps` steps of ALIAS_EL_STEP_DEG above and below it) on the bins
   * of `bins` not marked in `used` (null: all): nearAz, nearEl / nearMass (NaN and 0 when no
   * azimuth is fitted by WATCH_MIN_BINS bins). With `need`, azimuths that cannot reach that
   * much evidence are given up early (see fitMass): a coarse azimuth that reaches `need` is found
   * exactly, but when none does the refinement may start from another coarse azimuth than without
   * `need`, and find one that does (the aliased-lobes test's 3 kHz band, before the alias test
   * looked at several elevations: 31 aliases in 104 hops with it, 30 without; every cell of the
   * motion matrix's 13 draws the same either way).
   */
  private nearBest(w: number, bins: HopBins, used: Uint8Array | null, need = 0, half = this.watchHalf[w]!, elSteps = 0): void {
    const az0 = this.watchAz[w]!;
    const el0 = this.watchEl[w]!;
    let bestAz = NaN;
    let bestEl = el0;
    let best = 0;
    for (let e = -elSteps; e <= elSteps; e++) {
      const el = el0 + e * ALIAS_EL_STEP_DEG;
      if (el < -89 || el > 89) continue;
      for (let d = -half; d <= half + 1e-9; d += COARSE_STEP_DEG) {
        const v = this.fitMass(bins, used, az0 + d, el, false, need);
        if (v > best && this.fitted >= WATCH_MIN_BINS) {
          best = v;
          bestAz = az0 + d;
          bestEl = el;
        }
      }
    }
    if (best > 0) {
      const centre = bestAz;
      for (let d = -REFINE_DEG; d <= REFINE_DEG; d += 2 * REFINE_DEG) {
        const v = this.fitMass(bins, used, centre + d, bestEl, false, need);
        if (v > best && this.fitted >= WATCH_MIN_BINS) {
          best = v;
          bestAz = centre + d;
        }
      }
    }
    this.nearAz = bestAz;
    this.nearEl = bestEl;
    this.nearMass = best;
  }

  /**
   * The heaviest bins (MAX_BINS) with weight this hop, over their noise mean this hop, that do
   * not fit the winner, with their pairs' phases (foreign), and the heaviest that do (own). A bin
   * back at its noise mean holds no caller now (its phase is noise), yet its weight memory may
   * still hold a louder caller that has just stopped: those bins made most of the evidence the
   * share rule weighs a find against, and a watched caller calling on as the louder one's call
   * ended went unheard while the analysis' memory still gave the hop to the other (a 3.4-2.4 kHz
   * sweep on a 20 cm square, 0.1 s after a broadband caller 25 deg off stopped: 170 bins held 41 of
   * evidence, the sweep's 22 of them 5; motion matrix draw 4242, crs05).
   */
  private collectBins(spectra: readonly FftBuffer[], invMag: readonly Float64Array[], winnerLags: Float64Array, weights: Float64Array, weightAcc: Float64Array, binScale: Float64Array, power: Float64Array, onset: OnsetWeigher): void {
    const P = this.P;
    const pairs = this.model.pairs;
    const k0 = this.firstBin;
    for (let p = 0; p < P; p++) {
      const w = (2 * Math.PI * winnerLags[p]!) / this.n;
      this.stepRe[p] = Math.cos(w);
      this.stepIm[p] = Math.sin(w);
      this.curRe[p] = Math.cos(w * k0);
      this.curIm[p] = Math.sin(w * k0);
    }
    this.foreign.clear();
    this.own.clear();
    this.ownTop = -1;
    for (let k = k0; k < this.endBin; k++) {
      const mass = binScale[k]! * weightAcc[k]!;
      const use = weights[k]! > 0 && mass > 0 && onset.overNoiseMean(power, k);
      // Each pair's unit cross-spectrum conj(X_a) X_b (the convention of the pair memories,
      // src/dsp/gcc.ts) against the winner's phasor (stepped to the next bin as it is read).
      let fit = 0;
      for (let p = 0; p < P; p++) {
        const cr = this.curRe[p]!;
        const ci = this.curIm[p]!;
        this.curRe[p] = cr * this.stepRe[p]! - ci * this.stepIm[p]!;
        this.curIm[p] = cr * this.stepIm[p]! + ci * this.stepRe[p]!;
        if (!use) continue;
        const [a, b] = pairs[p]!;
        unitCrossInto(spectra[a]!, spectra[b]!, invMag[a]!, invMag[b]!, k, this.re, this.im, p);
        fit += this.re[p]! * cr - this.im[p]! * ci;
      }
      if (!use) continue;
      if (fit >= WINNER_FIT * P) {
        this.own.keep(k, mass, this.re, this.im);
        if (k > this.ownTop) this.ownTop = k;
      } else this.foreign.keep(k, mass, this.re, this.im);
    }
    this.foreign.sortByMass();
    this.own.sortByMass();
  }

  /**
   * The evidence of the bins of `bins` not marked in `used` (null: all) that fit direction (az, el)
   * within WATCH_FIT (their count in `fitted`); `take` marks them in `used`. With `need` (> 0, and
   * `used` null) it stops once the bins left cannot bring the evidence up to `need`, and returns
   * what it has (less than `need`): most tested directions fail on the first heavy bins.
   */
  private fitMass(bins: HopBins, used: Uint8Array | null, azDeg: number, elDeg: number, take: boolean, need = 0): number {
    const P = this.P;
    this.model.lagsOf(azDeg, elDeg, this.lags);
    const scale = (2 * Math.PI) / this.n;
    let mass = 0;
    let missed = 0;
    let count = 0;
    for (let r = 0; r < bins.count; r++) {
      const i = bins.order[r]!;
      if (used !== null && used[i] === 1) continue;
      const k = bins.bin[i]!;
      // A pair adds at most 1: once the pairs left cannot bring the sum up to WATCH_FIT x P the
      // bin misses (the same answer as summing every pair, sooner).
      let fit = 0;
      for (let p = 0; p < P && fit + (P - p) >= WATCH_FIT * P; p++) fit += Math.cos(bins.phase[i * P + p]! + scale * k * this.lags[p]!);
      if (fit < WATCH_FIT * P) {
        missed += bins.mass[i]!;
        if (need > 0 && bins.total - missed < need) break;
        continue;
      }
      if (take && used !== null) used[i] = 1;
      mass += bins.mass[i]!;
      count++;
    }
    this.fitted = count;
    return mass;
  }
}

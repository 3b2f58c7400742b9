import { makeBands, type BandLayout } from '../dsp/bands.js';
import { RealFft, type FftBuffer } from '../dsp/fft.js';
import { addBandScores, PairCorrelator, unitCrossInto } from '../dsp/gcc.js';
import { addBandScoresLanes, hopCoherenceF32, hopCoherenceLanes, magnitudes, refineLagLanes, setPhasorsF32, unitLayout, type UnitLayout } from '../dsp/gcc-lanes.js';
import { GccKernels } from '../dsp/gcc-kernels.js';
import { OnsetWeigher } from '../dsp/onset.js';
import { hannWindow, windowFrame } from '../dsp/window.js';
import type { Direction, DirectionModel } from '../direction/direction-model.js';
import { wrapDeg } from '../geometry/vec3.js';
import type { ResolvedAnalysis } from './analysis-options.js';
import { BandFusion, MIN_SUPPORT, type FusionResult } from './band-fusion.js';
import { BinDirections, MAX_BIN_PEAKS, SEVERAL_RUNS } from './bin-directions.js';
import { closureOff, COMMON_MODE_SHARE } from './closure.js';
import { confidenceOf, type ConfidenceFeatures } from './confidence.js';
import { WatchedDirections } from './watched-directions.js';

/** Candidates whose pair lags all differ by less than this (samples) are one peak. */
const SAME_PEAK_LAGS = 1.5;
/** A further source must reach this share of the winner's fused score. */
const SOURCE_RATIO = 0.25;
/**
 * A peak of the bin directions (./bin-directions.ts) this many degrees of azimuth from every
 * source the band fusion reported is a further source (a caller heard with a louder one) ...
 */
const BIN_SOURCE_APART_DEG = 15;
/**
 * ... when it holds this share of the winner's own bin peak (of its fused evidence when the bins
 * do not hear the winner). Chosen on the motion matrix: a further source of the fusion needs
 * only SOURCE_RATIO, but at that share of the fused evidence 2027's draw kept 10 tracks holding
 * two sources; at 0.5 and 0.65 of the winner's peak 7 (0.65 lost more quiet callers).
 */
const BIN_SOURCE_RATIO = 0.5;
/**
 * A bin peak of several runs (./bin-directions.ts: a caller's harmonics, or stretches of its
 * band, reading one direction) is a further source when it holds this share of the winner's bin
 * peak, scored at least RUNS_SCORE: a passer calling with a chorus fills a few bins against the
 * chorus' many but is no less sure a caller, and scored by its share alone (about 0.2) it would
 * never open an event (the tracker's event-enter confidence is 0.5). Heard that way it is a
 * source `underLouder`: as its call ends the bins read a blend of it and the louder caller, which
 * walked a passer's track onto a chorus when such sources moved tracks (the tracker lets them
 * support a track, not move or start one). Chosen on the motion matrix, ten draws (share of
 * sources >= 80 % complete summed in per cent / id switches / tracks holding two sources):
 * without the rule 766 / 96 / 16; ratio 0.15 and score 0.6 with such sources moving tracks
 * 778 / 127 / 19; not moving them 782 / 92 / 18; ratio 0.1 782 / 92 / 15; and also looked for
 * when no bin peak holds what a further source of the fusion needs (the bins then weigh a peak
 * against the winner's fused evidence) 789 / 92 / 15 (kept; events per call in the accuracy
 * matrix 1.15 -> 1.17, its rumble cells 1.10 -> 1.14). On four of the draws (2027, 1001, 1313,
 * 6060) at ratio 0.15: score 0.5 296 / 40 / 5, 0.6 304 / 42 / 6, 1.0 304 / 43 / 7; at score 0.6:
 * ratio 0.05 and 0.1 304 / 40 / 3, 0.25 304 / 42 / 6.
 */
const RUNS_SOURCE_RATIO = 0.1;
const RUNS_SCORE = 0.6;
/**
 * ... and a further source of the fusion with a bin peak this near is read at the peak (its lags
 * were bent by the louder caller's bands) when at least BIN_CORRECT_LOW_SHARE of its band support
 * lies below the bins' aliasing limit (above it the bins hear only a blend of what sounds there);
 * so is the winner, when the hop holds another caller (winnerAtOwnPeak). A chorus' partials reach
 * above the bins' top (1.5 kHz on a 10 cm square), where the other chorus' partials share its
 * bands: a chorus at -52 deg was read at -60 on every hop a chorus at 67 deg called with it, with
 * 0.35-0.5 of its support below the top (test/analysis/masked-caller.test.ts). Chosen on the
 * motion matrix, ten draws (sources >= 80 % complete summed / id switches / tracks holding two):
 * 0.5 and the winner never 825 / 75 / 16; further sources at 0.35 (0.25 the same) 828 / 74 / 16;
 * the winner too at 0.35 837 / 69 / 16, at 0.25 837 / 72 / 17 (held out 2718, 4040, 9999: 247 /
 * 24 / 9 -> 247 / 29 / 12, a tracker's rate estimate swapping two crossing callers in 4040 crs06);
 * the winner also within the memory's time constant after another caller (14 hops) 841 / 61 /
 * 15, held out 250 / 24 / 10 (28 hops: 601 / 49 / 13 on seven of the ten, against 604 / 44 / 11).
 * All 13 draws: sources >= 80 % complete 686 -> 698 of 831, mean completeness 89.9 -> 90.7 %,
 * crossing cells with a source switching ids twice or more 12 -> 9 of 78. The accuracy matrix
 * within 5 deg 84.2 -> 84.1 % (its crossings 84.4 -> 83.7 %).
 */
const BIN_CORRECT_DEG = 25;
const BIN_CORRECT_LOW_SHARE = 0.35;
/**
 * A watched direction heard under the winner (addWatchedSources) holds this share of the
 * winner's fused evidence ...
 */
const WATCH_RATIO = 0.04;
/**
 * ... and lies this many degrees of azimuth from every source the hop reports. Chosen on the
 * motion matrix (crossing and chorus cells of the ten draws, and the three held out; sources >= 80
 * % complete / id switches / tracks holding two, against 65 / 19 / 7 on the ten draws' crossings
 * and 326 / 8 / 6 on their choruses without the watch): at 5 deg, with the test up to 20 deg either
 * side of the prediction, crossings 79 / 23 / 12, choruses 334 / 37 / 14 (a chorus track watched
 * through its pause took a passer's call 7 deg from the passer's own source); at 10 deg, up to 10
 * deg either side, 79 / 21 / 10 and 335 / 8 / 5; also no watch within 12 deg of another track
 * (tracker.ts, WATCH_CLEAR_DEG) 75 / 18 / 8 and 335 / 8 / 5 (kept: two swaps of crossing
 * callers fewer over the 13 draws). Letting a watched find move its track (not only keep it
 * alive): 13 draws' crossings 57 id switches against 35. Ratio 0.01 and 0.04 alike (0.04 kept:
 * fewer stray finds in rooms). The accuracy matrix: every hop's answer as before; events per
 * call change in two cells (room20c 2.33 -> 2.44, x11t 2.75 -> 3.00).
 */
const WATCH_APART_DEG = 10;
/** The bin directions are worked out on one hop in this many; the hops between reuse their peaks. */
const BIN_EVERY_HOPS = 2;
/**
 * A fusion winner more than this many degrees from each of two bin peaks on either side of it is
 * two callers heard as one (splitMergedWinner). Chosen on the motion matrix (eight draws; sources
 * >= 80 % complete summed over the draws / id switches / tracks holding two sources): without the
 * rule 605 / 81 / 12; at 3 deg 609 / 86 / 12, at 5 deg 613 / 79 / 12, at 8 deg 613 / 84 / 14
 * (the winner moved to the nearer peak; to the heavier one, at 5 deg: 613 / 80 / 12, but a rumble's
 * peak could take a call's answer: more confident-and-wrong hops in the matrix's rumble cells).
 */
const MERGED_APART_DEG = 5;
/**
 * The geometry check compares the answer's delays with each pair's own peaks: the strongest
 * OWN_PEAKS, those at least OWN_PEAK_SHARE of the best one's height (a call above the array's
 * aliasing limit, or a second caller, gives a pair several near-equal peaks, and its best one
 * alone misled the check into calling a right geometry wrong on a quarter of the hops).
 */
const OWN_PEAKS = 3;
const OWN_PEAK_SHARE = 0.7;
/** The previous hop's answer is preferred by this factor (1 + STICKINESS) in the selection ... */
const STICKINESS = 0.5;
/** ... when a candidate's lags all lie within this many samples of it. */
const STICKY_LAGS = 2;
/** The first hops of a stream only learn the noise floor (their SNRs mean little yet). */
const FLOOR_WARMUP_HOPS = 4;
/**
 * A hop below the detection SNR still reports a direction when its own coherence with the
 * answer stands this many standard deviations above that of incoherent noise
 * (1 / sqrt(2 bins pairs)).
 */
const FRESH_Z = 5;
/**
 * A bin that a much louder sound enters (ENTER_HELD times over the largest power it held lately,
 * and not already rising the hop before: its onset weight then below ENTER_RISING) forgets what
 * its memory held. The memory weighs bins by their onset, not their power, so a caller that
 * starts as another's call ends, or while it calls, was read from bins that still held the
 * other's phase at the same weight: a tone 8 dB over a broadband caller on a 10 cm square,
 * calling as its calls end, was read at its own bearing on 2 of its 64 hops alone (23 with the
 * rule; test/analysis/masked-caller.test.ts). Chosen on the motion matrix, ten draws (sources >=
 * 80 % complete summed / id switches / tracks holding two), and the accuracy matrix: without the
 * rule 800 / 94 / 14; a rise of 10x over the bin's background alone 822 / 93 / 23, but rooms lost
 * 6 points within 5 deg (the second hop of every onset forgot the first); with the rising test
 * also 822 / 93 / 23 with rooms as before; held 2x 806 / 76 / 16 and held 4x 803 / 79 / 14, but
 * two and one dummy-head bursts cells then gave 1.17 events per call; held 8x 805 / 79 / 14
 * (kept; held out: 2718 77 -> 80 %, 13 -> 9 switches; 4040 91 -> 92 %; 9999 70 %, 12 -> 13, 3 ->
 * 4). With the held test at 8x, the rise over the background (10x or 5x) changed nothing: the
 * held power is at least the background.
 * An onset that ramps over two hops is spared by the rising test on its second: so a bin whose
 * onset weight first reaches ENTER_RISING keeps aside, for one hop, the memory it held before
 * that hop and the most it held lately; if the next hop stands ENTER_HELD over that, the memory
 * from before the rise is taken out again and the rise's first hop stays (forgetting both hops
 * lost 6 points within 5 deg in rooms, above). Ten draws 807 / 79 / 15 -> 825 / 81 / 16; the
 * tone above 23 -> 41 of its 64 hops alone; accuracy matrix within 5 deg unchanged, events per
 * call 1.15 -> 1.16 (rooms 1.35 -> 1.39).
 */
const ENTER_HELD = 8;
const ENTER_RISING = 0.5;
/**
 * A bin whose rise begins this hop (keepBeforeRise's test), standing CHANGED_SNR over its noise
 * floor, and whose fresh cross-spectra agree with what its memory holds by less than this
 * forgets it: the mean over the pairs of the cosine of the phase between the two, weighted by
 * the memory's magnitude (forgetChangedBins). A caller that starts as another's call ends, at
 * the same level in the same bins, enters no bin ENTER_HELD over what it held, and the memory
 * read it in the other's direction for much of its call: two broadband callers 38 deg apart on
 * a 10 cm square (motion matrix draw 1001, crs02: b's calls begin as a's end) gave b none of its
 * 10 calls (3 with the rule), and a high sweep starting three hops after a broadband caller
 * 6 deg away stopped (draw 555, crs01) was read sliding from the other's bearing to its own over
 * its whole call (4 of 13 calls on its track, 9 with the rule). At 3.5 kHz on a 10 cm triangle
 * the two fit with 0.85, at 7.4 kHz with 0.46, so the threshold sits high.
 * Chosen on the motion matrix, 23 draws (sources >= 80 % complete, per cent summed over the
 * draws / id switches / tracks holding two; crossings, then all families) and the accuracy
 * matrix: without the rule 1734 / 51 / 15, 2126 / 118 / 23; the rule in every bin everywhere
 * (no trust, no SNR) at 0.9 1900 / 39 / 12, 2158 / 116 / 23, but the accuracy matrix's rooms lost
 * 8 points within 5 deg (87.0 -> 78.6 %: one hop's phases in a reverberant band are not its
 * caller's), at 0.5 and 0 still 5 and 2.5 points; a shorter memory instead (--memory 0.08)
 * 1876 / 52 / 16, 2145 / 142 / 26 (passes 2246 -> 2216). With the trust (TRUST_MIN 0.6), no SNR:
 * 1884 / 39 / 12, 2152 / 113 / 22 (the high sweep at 80 deg/s on the 20 cm square lost calls, and
 * wind between a pulsed chorus' calls was read more often: test/analysis/masked-caller.test.ts).
 */
const CHANGED_AGREE = 0.9;
/**
 * ... or whose fresh phases stand, as delays (each pair's phase difference over 2 pi f), this
 * many seconds from their memory's, root mean square over the pairs. At low frequencies two
 * callers' phases differ little: two harmonic tones (451 and 473 Hz) 16 deg apart on a 10 cm
 * square differ by about 0.2 rad per pair (cosine 0.98, over CHANGED_AGREE) but by 60-80 us, and
 * the caller that started as the other's call ended was read 9-12 deg towards it for its whole
 * call (motion matrix draw 222, crs04: b 12 -> 38 % complete with the rule; the bins the two
 * share, which do not rise, still hold the other's phase; forgetting those too for four hops
 * after this rule fired cost rooms 1.4 points within 5 deg, and only where single hops are
 * trusted at 0.8, with bins fallen 30 dB from their held power, 48 -> 78 id switches).
 * 50 us is an eighth of a 10 cm square's widest delay.
 * Chosen on the motion matrix, 23 draws at 48 kHz (callers under 80 % complete / id switches /
 * tracks holding two; cells outside the targets): without 65 / 55 / 8; 71, 40 us 57 / 48 / 8; 62,
 * 50 us 56 / 53 / 10; 62, 60 us 59 / 51 / 9; 65, a share of the array's widest delay instead: 0.06
 * 59 / 65 / 9; 68, 0.1 56 / 56 / 10; 64, 0.16 57 / 48 / 10; 62; at 16 kHz without 98 / 99 / 22;
 * 105, 40 us 93 / 99 / 21; 100, 50 us 92 / 95 / 19; 100, 0.16 of the widest delay 92 / 101 / 21;
 * 101. At 40 us the demo's pond chorus got a second track of two events 10-13 deg off (bins that
 * forgot its phase at its pulses while the reed chorus and the bird called read a blend; the
 * demo-scene test's target of one track per chorus); at 50 us it keeps one. At 40 us, ten further
 * draws (333..1414) 47 / 40 / 7; 48 -> 46 / 44 / 8; 48 (crossings 18 -> 14 cells out, choruses 18
 * -> 22: draw 999 cho03, a passer at 571 Hz calling through a chorus at 574, read at blends of the
 * two once its rising bins forgot the chorus' phase), at 16 kHz 44 / 55 / 11; 53 -> 39 / 54 / 11;
 * 47; at 50 us (with the tracker's loneLogHz) 47 / 46 / 10; 49 and 42 / 54 / 10; 49. The
 * accuracy matrix: every family within 0.1 point within 5 deg and 0.01 events per call of what
 * it was.
 */
const CHANGED_DELAY_S = 50e-6;
/**
 * ... and only bins standing this many times over their tracked noise minimum (20 dB): a gust of
 * wind between calls forgot what a call left and was read at 0.3-0.45 confidence. As chosen
 * (trust, SNR): crossings 1734 / 51 / 15 -> 1884 / 38 / 10, choruses 2199 / 39 / 8 -> 2225 / 38 /
 * 10, passes 2246 / 28 -> 2246 / 25, all 2126 / 118 / 23 -> 2163 / 101 / 20; the accuracy matrix
 * within 0.1 point per family, confident-and-wrong 0.69 -> 0.58 % of hops.
 */
const CHANGED_SNR = 100;
/**
 * The rule above holds while the running mean of the rising bins' fresh agreement with the
 * answer of the hop before (risingAgreement) is at least this: a caller in the open is heard
 * alike hop by hop (per cell mean 0.7-0.98 in 7 of 10 motion-matrix cells), a reverberant room
 * is not (0.04-0.6 in 8 of 10 of the accuracy matrix's room cells). With the mean learned at
 * TRUST_RATE from the start (no plain mean of the first hops, so a short recording never trusts
 * them), no SNR: crossings 1792 / 49 / 14 at 0.6, 1767 / 47 / 15 at 0.45. Kept in
 * keepBeforeRise, so like the other rules of the memory it needs --quiet-memory below --memory.
 */
const TRUST_MIN = 0.6;
/** The running mean takes this share of each new hop's agreement (the first 100 hops: their plain mean). */
const TRUST_RATE = 0.01;
/** A hop with fewer rising bins than this leaves the running mean as it is. */
const TRUST_BINS = 4;
/** A band's evidence grows with its SNR up to this many dB. */
const EVIDENCE_SNR_CAP_DB = 30;
/** A bin's weight memory above this still holds a direction worth forgetting (a full-weight hop adds 1). */
const QUIET_HELD = 1e-4;
/** A bin whose power this hop is below this many times its noise mean is quiet (3 dB; noise alone rarely reaches it) ... */
const QUIET_RATIO = 2;
/** ... and sound has left it if it stood this many times over its noise mean within about the memory's time constant (6 dB). */
const LOUD_RATIO = 4;

/** The bands that support one candidate: first and last (-1 when none), the strongest, and sums for the support-weighted frequency. */
interface BandSupport {
  first: number;
  last: number;
  dominant: number;
  /** The bands' summed support weight. */
  weightSum: number;
  /** The support-weighted mean of the bands' centres, Hz (NaN without support). */
  centreHz: number;
}

/** One hop's result. The object and its arrays are reused by the next hop: copy what you keep. */
export interface HopResult {
  index: number;
  timeS: number;
  levelDbfs: number;
  channelLevelsDbfs: Float64Array;
  /** Onset strength in [0, 1]. */
  onset: number;
  /** SNR of the hop over the tracked noise floor, dB: that of its best band (0 at the floor). */
  snrDb: number;
  /** Per band: SNR over its noise floor, dB. */
  bandSnrDb: Float64Array;
  /** Calibrated: the probability that the direction lies within 5 deg of a sounding source (src/analysis/confidence.ts). */
  confidence: number;
  /** Confidence features of the winner: share of the band evidence that agrees with it, its share of the fused scores. */
  agree: number;
  share: number;
  /** Total band evidence of the hop (sum over bands of mean weight x SNR / 10 dB). */
  evidence: number;
  /** Wavelengths across the array at the winner's evidence-weighted mean frequency (the resolving power of its bands). */
  apertureWaves: number;
  /** This hop's own coherence with the winner's lags over its supporting bands, [0, 1] (no memory). */
  fresh: number;
  /** The same in standard deviations of incoherent noise's (sqrt(2 bins pairs) x fresh). */
  freshZ: number;
  /** True when the strongest source is confident enough to report. */
  valid: boolean;
  /** Refined delay per pair for the strongest source, seconds (NaN when none). */
  tdoaS: Float64Array;
  /** Per pair (arrays of 3+ mics): the delay of the pair's own strong correlation peak nearest the answer's (OWN_PEAK_SHARE), seconds (NaN when none). */
  pairOwnTdoaS: Float64Array;
  /** Arrays of 3+ mics: the answer's delays lie off the pairs' own peaks (pairOwnTdoaS; ./closure.ts), read by the geometry check. */
  offClosure: boolean;
  /** Sources found, strongest first. */
  sourceCount: number;
  /** centreHz: the centre frequency of the bands that support the source (support-weighted), Hz; NaN for a source of the bins. */
  /**
   * underLouder: a caller heard only under a louder one, from a few bins (a bin peak of several
   * runs, addBinSources): its direction may be a blend of the two as its call ends.
   * aliasOf: for a tracked caller's direction that the hop's sound fits as well as the source of
   * that index (an aliased lobe of it, ./watched-directions.ts), that index; else -1. Such a source
   * is the same sound as the other, not a second caller.
   */
  sources: { azimuthDeg: number; elevationDeg: number | null; score: number; centreHz: number; underLouder: boolean; aliasOf: number }[];
  /** Band fusion: support given (relative to the strongest band, [0, 1]) and candidate supported (-1 none), per band. */
  bandVoteWeight: Float64Array;
  bandVoteCandidate: Int32Array;
  /** Pair-0 delay (s) of each band's chosen candidate, NaN when the band did not vote. */
  bandVoteTdoaS: Float64Array;
  bands: BandLayout;
  /** Index of the band that contributed most to the strongest source, -1 when none. */
  dominantBand: number;
  /** First and last band supporting the strongest source (-1 when none): the range its delay stands for. */
  supportFirstBand: number;
  supportLastBand: number;
  /** Per-pair diagnostics of the strongest source: normalised peak height and band agreement. */
  pairPeak: Float64Array;
  pairAgreement: Float64Array;
}

/**
 * The per-hop analysis core: windowed frames in, direction estimates out. Pure and
 * synchronous; all buffers are allocated once here.
 *
 * Stages: Hann window and one real FFT per channel; per-bin onset and presence weights and
 * per-band SNR over the noise floor; per pair the PHAT cross-spectrum added into an
 * onset-weighted memory and one inverse FFT weighted by band evidence; candidates from the
 * direction model; evidence-weighted band fusion over the candidates (./band-fusion.ts);
 * sub-sample refinement of the winners' lags on the bands that support them; direction from
 * the lags; further callers from the directions of single bins below the aliasing limit
 * (./bin-directions.ts) and, at the tracker's predictions (watch), from single bins at any
 * frequency, or as an aliased lobe of the winner (./watched-directions.ts); calibrated
 * confidence (./confidence.ts).
 */
export class HopAnalyzer {
  readonly frame: number;
  readonly hop: number;
  readonly bands: BandLayout;
  private readonly fft: RealFft;
  /**
   * The per-bin kernels in WebAssembly SIMD (bit-identical to the JavaScript ones: ../dsp/gcc-kernels.ts),
   * null on the JavaScript path (no WebAssembly SIMD, the fft.js FFT, or BEARLINE_KERNELS=js).
   * With them, the arrays they read live in their memory, and `kSpectra` holds float32 copies of
   * the spectra's analysis bins there.
   */
  private readonly kernels: GccKernels | null;
  private readonly kSpectra: Float32Array[];
  /** The inverse FFT's input, scaled and packed by the kernels (null on the JavaScript path). */
  private readonly kPacked: Float32Array | null;
  /** The bands' sums of power and of the noise floor (the kernels' weight stage). */
  private readonly kBandSums: Float64Array[];
  /** The analysis bins of each PFFFT spectrum and of kPacked, as views made once (no view made per hop). */
  private readonly kSpectraBins: Float32Array[];
  private readonly kPackedBins: Float32Array | null;
  /**
   * The spectra stage on the kernels: one frame per channel in their memory (the framer may fill
   * them in place: inputFrames()), the window, and a windowed frame (float32).
   */
  private readonly kFrames: Float64Array[];
  private readonly kWindow: Float64Array | null;
  private readonly kWindowed: Float32Array | null;
  private readonly window: Float64Array;
  /** The windowed frame (the FFT's input). */
  private readonly windowed: FftBuffer;
  /** Interleaved half spectrum (re, im) per channel, in the FFT's own buffers. */
  private readonly spectra: FftBuffer[];
  /** 1 / |X_c,k| per channel (0 for an empty bin): PHAT divides by |X_a X_b| = |X_a| |X_b|. */
  private readonly invMag: Float64Array[];
  /** weights[k] / |X_c,k| for each channel that is the first of a pair (leadsPair). */
  private readonly weightedInv: Float64Array[];
  private readonly leadsPair: Uint8Array;
  private readonly power: Float64Array;
  private readonly weights: Float64Array;
  private readonly weightAcc: Float64Array;
  /**
   * Per bin whose rise began the hop before (riseList[0 .. riseCount)): its memory before the
   * rise (the most it held then is still in heldBefore until forgetEnteredBins copies anew).
   */
  private readonly riseList: Int32Array;
  private riseCount = 0;
  private readonly riseW: Float64Array;
  private readonly riseRe: Float64Array[];
  private readonly riseIm: Float64Array[];
  /** The weights and held powers the hop before left, over the analysis bins (copied before the onset weigher's update). */
  private readonly weightsBefore: Float64Array;
  private readonly heldBefore: Float64Array;
  /** The running mean of risingAgreement (TRUST_MIN), and how many hops it has taken. */
  private freshTrust = 0;
  private trustHops = 0;
  /** Per rising bin and pair, its fresh cross-spectrum (freshCrossOf): real, imaginary. */
  private readonly riseFreshRe: Float64Array;
  private readonly riseFreshIm: Float64Array;
  /** Per bin, the pairs' summed squared phase difference (rad^2) that stands for CHANGED_DELAY_S root mean square there: P (2 pi f CHANGED_DELAY_S)^2 (forgetChangedBins). */
  private readonly changedPhaseSq: Float64Array;
  /** Scratch: the bins forgetQuietBins() scales this hop. */
  private readonly quietBins: Int32Array;
  /** The pairs' cross-spectrum addresses in the kernels' memory (forgetQuietBins; null on the JavaScript path). */
  private readonly accAddresses: Int32Array | null;
  /** Extra factor per hop on the cross-spectrum of a bin at its noise floor (1 = none). */
  private readonly quietForget: number;
  private readonly bandWeight: Float64Array;
  private readonly binScale: Float64Array;
  private readonly onset: OnsetWeigher;
  private readonly correlators: PairCorrelator[];
  private readonly memory: number;
  private readonly candLags: Float64Array;
  private readonly candScores: Float64Array;
  private readonly bandScores: Float64Array;
  private readonly evidence: Float64Array;
  private readonly snrMem: Float64Array;
  /** Per band: log2(1 + its bin count): a wider band holds more independent evidence, but far less than in proportion (a wide-band interferer must not outweigh a call in several narrower bands). */
  private readonly bandWidthWeight: Float64Array;
  private readonly fusion: BandFusion;
  /** Directions per bin below the pairs' aliasing limits (null when no bin qualifies). */
  private readonly binDirections: BinDirections | null;
  /** The directions the tracker asks to be looked for in the next hop (arrays of 3+ pairs; ./watched-directions.ts), null otherwise. */
  private readonly watched: WatchedDirections | null;
  /** The last hop (as hopIndex) that held another caller beside the winner (winnerAtOwnPeak), -1 before any. */
  private otherAt = -1;
  /** Hops within which that other caller still fills the memory: its time constant (--memory). */
  private readonly otherHops: number;
  /** Per reported source: the share of its band support below the bin directions' top frequency. */
  private readonly lowSupport: Float64Array;
  /** The bin directions' top frequency, Hz. */
  private readonly binTopHz: number;
  /** Per bin peak of the hop: 1 when it lies within BIN_SOURCE_APART_DEG of the winner. */
  private readonly peakOfWinner = new Uint8Array(MAX_BIN_PEAKS);
  private readonly selection: Float64Array;
  private readonly features: ConfidenceFeatures = { agree: 0, share: 0, snrDb: 0, evidence: 0, apertureWaves: 0, onset: 0, fresh: 0 };
  /** The array's largest delay, seconds (the widest pair's search limit without margin). */
  private readonly apertureS: number;
  private readonly prevLags: Float64Array;
  private readonly ownLag = new Float64Array(OWN_PEAKS);
  private readonly ownHeight = new Float64Array(OWN_PEAKS);
  private prevValid = false;
  private readonly useBand: Uint8Array;
  private readonly refined: Float64Array;
  /** The largest delay searched on any pair, samples (at least 1). */
  private readonly largestLag: number;
  /** Scratch of the pairs' joint refinement (derivatives, which pairs still step). */
  private readonly refineScratch: Float64Array;
  private readonly refineActive: Uint8Array;
  private readonly unitLayout: UnitLayout;
  /** Unit spectra of this hop (UnitLayout), written with the magnitudes (spectraStage); null for a pair alone (it does without). */
  private readonly unitSpectra: Float32Array | null;
  /** Per four pairs: their channels a (4) then b (4), and on the kernels their swizzles. */
  private readonly freshChans: Int32Array;
  private readonly freshIdx: Uint8Array[];
  private readonly freshOut: Float32Array;
  private readonly freshPh = new Float32Array(16);
  private readonly dir: Direction = { azimuthDeg: 0, elevationDeg: null };
  private readonly order: Int32Array;
  /** The bands supporting the candidate being refined (reused). */
  private readonly support: BandSupport = { first: -1, last: -1, dominant: -1, weightSum: 0, centreHz: NaN };
  /** The hop result the stages fill and process() returns (one object, reused every hop). */
  readonly result: HopResult;
  private readonly pairBandScores: Float64Array;
  /** Compute per-pair diagnostics (costs one pass over the bins per pair per hop). */
  diagnostics = false;
  private hopIndex = 0;
  /** The hop index (hopIndex - 1 during its stages) whose bin directions addBinSources computed last, -1 before the first. */
  private binsAt = -1;
  /** Whether the last hop computed its pair correlations (a silent hop does not). */
  private lastHopCorrelated = false;
  /** Whether the last hop had something sounding (its best band at --detect-snr, or its fresh coherence), and the quiet hops since (skipQuietHop). */
  private lastSounding = false;
  private quietRun = 0;
  /** Hops that went through the direction stages (4-6) so far: all but the silent ones and those skipQuietHop skipped. */
  searchedHops = 0;
  /** Whether the last hop computed every pair's correlation curve (else only the model's curvePairs). */
  private allCurves = false;

  constructor(
    readonly channels: number,
    readonly sampleRate: number,
    readonly model: DirectionModel,
    readonly options: ResolvedAnalysis,
    /** 'js' keeps the JavaScript kernels even where the WebAssembly ones load (tests, benchmarks). */
    kernelPath: 'auto' | 'js' = 'auto',
  ) {
    const n = options.frame;
    this.frame = n;
    this.hop = options.hop;
    this.fft = new RealFft(n);
    const bins = n / 2 + 1;
    const P = model.pairs.length;
    const candidates = options.maxCandidates;
    // The fresh coherence of many pairs: unit spectra with the channels side by side, four pairs a pass.
    const units = unitLayout(channels);
    this.unitLayout = units;
    this.leadsPair = new Uint8Array(channels);
    for (const [a] of model.pairs) this.leadsPair[a] = 1;
    let leaders = 0;
    for (let c = 0; c < channels; c++) leaders += this.leadsPair[c]!;
    // The arrays the kernels read: spectra copies, 1/|X|, weights x 1/|X|, power, weights, the pairs'
    // accumulators, band scores, evidence, band flags.
    this.kernels =
      this.fft.backend === 'pffft' && kernelPath === 'auto'
        ? GccKernels.create(
            GccKernels.bytesFor(
              [...new Array<number>(channels + leaders + 4 + 2 * P).fill(bins), options.bands * candidates, options.bands, options.bands, options.bands, options.bands, ...new Array<number>(channels + 1).fill(n)],
              [...new Array<number>(channels + 2).fill(n), bins, 2 * P, P > 1 ? bins * units.stride : 0, 4],
              [options.bands, ...new Array<number>(Math.ceil(P / 4)).fill(32 * units.nv)],
            ) +
              8 * options.bands +
              OnsetWeigher.kernelBytes(bins),
          )
        : null;
    const k = this.kernels;
    const f64 = (len: number) => (k ? k.f64(len) : new Float64Array(len));
    const layout = makeBands(n, sampleRate, options.minFreqHz, options.maxFreqHz, options.bands);
    if (k) k.setBands(layout);
    this.kSpectra = k ? Array.from({ length: channels }, () => k.f32(n)) : [];
    this.kPacked = k ? k.f32(n) : null;
    this.kBandSums = k ? [k.f64(options.bands), k.f64(options.bands)] : [];
    const { firstBin, endBin } = layout;
    this.window = hannWindow(n);
    this.kFrames = k ? Array.from({ length: channels }, () => k.f64(n)) : [];
    this.kWindow = k ? k.f64(n) : null;
    this.kWindow?.set(this.window);
    this.kWindowed = k ? k.f32(n) : null;
    this.windowed = this.fft.createInput();
    this.spectra = Array.from({ length: channels }, () => this.fft.createSpectrum());
    this.kSpectraBins = k ? this.spectra.map((sp) => (sp as Float32Array).subarray(2 * firstBin, 2 * endBin)) : [];
    this.kPackedBins = this.kPacked ? this.kPacked.subarray(2 * firstBin, 2 * endBin) : null;
    this.invMag = Array.from({ length: channels }, () => f64(bins));
    this.weightedInv = Array.from({ length: channels }, (_, c) => (this.leadsPair[c] ? f64(bins) : new Float64Array(0)));
    this.power = f64(bins);
    this.weights = f64(bins);
    this.weightAcc = f64(bins);
    this.bands = layout;
    this.bandWeight = f64(options.bands);
    this.binScale = f64(bins);
    const hopS = options.hop / sampleRate;
    this.memory = options.memoryS > 0 ? Math.exp(-hopS / options.memoryS) : 0;
    this.otherHops = Math.round(options.memoryS / hopS);
    const quiet = options.quietMemoryS > 0 ? Math.exp(-hopS / options.quietMemoryS) : 0;
    this.quietForget = this.memory > 0 ? Math.min(1, quiet / this.memory) : 1;
    this.quietBins = k && this.quietForget < 1 ? k.i32(bins) : new Int32Array(this.quietForget < 1 ? bins : 0);
    this.onset = new OnsetWeigher(bins, {
      floor: 1 - options.onsetWeight,
      fullRise: 4,
      backgroundDecay: Math.exp(-hopS / options.backgroundS),
      floorRise: 10 ** ((options.floorRiseDbS * hopS) / 10),
      fullPresence: 4,
    }, k, this.quietForget < 1 ? { quietRatio: QUIET_RATIO, loudRatio: LOUD_RATIO, heldDecay: this.memory } : null);
    this.correlators = model.pairs.map((_, p) => new PairCorrelator(n, model.maxLag[p]!, k ? { accRe: k.f64(bins), accIm: k.f64(bins) } : undefined));
    this.accAddresses = k ? k.crossSpectrumAddresses(this.correlators) : null;
    const riseBins = this.quietForget < 1 ? bins : 0;
    this.riseList = new Int32Array(riseBins);
    this.weightsBefore = new Float64Array(riseBins);
    this.heldBefore = new Float64Array(riseBins);
    this.riseW = new Float64Array(riseBins);
    this.riseFreshRe = new Float64Array(riseBins * model.pairs.length);
    this.riseFreshIm = new Float64Array(riseBins * model.pairs.length);
    this.changedPhaseSq = new Float64Array(riseBins);
    for (let k = 0; k < riseBins; k++) this.changedPhaseSq[k] = model.pairs.length * ((2 * Math.PI * k * sampleRate * CHANGED_DELAY_S) / n) ** 2;
    this.riseRe = model.pairs.map(() => new Float64Array(riseBins));
    this.riseIm = model.pairs.map(() => new Float64Array(riseBins));
    this.candLags = new Float64Array(candidates * P);
    this.candScores = new Float64Array(candidates);
    this.bandScores = f64(options.bands * candidates);
    this.evidence = f64(options.bands);
    this.snrMem = new Float64Array(options.bands);
    this.bandWidthWeight = Float64Array.from({ length: options.bands }, (_, b) => Math.log2(1 + this.bands.end[b]! - this.bands.start[b]!));
    this.fusion = new BandFusion(options.bands, candidates);
    const binDirections = new BinDirections(model, n, sampleRate, layout.firstBin, layout.endBin);
    this.binDirections = binDirections.active ? binDirections : null;
    this.binTopHz = (binDirections.endBin / n) * sampleRate;
    this.watched = P >= 3 ? new WatchedDirections(model, n, layout.firstBin, layout.endBin) : null;
    this.lowSupport = new Float64Array(options.maxSources);
    this.selection = new Float64Array(candidates);
    this.prevLags = new Float64Array(P);
    let widest = 0;
    for (let p = 0; p < P; p++) widest = Math.max(widest, model.maxLag[p]!);
    this.apertureS = Math.max(1, widest - 1) / (1 + options.lagMargin) / sampleRate;
    this.largestLag = Math.max(1, widest);
    this.useBand = k ? k.u8(options.bands) : new Uint8Array(options.bands);
    this.pairBandScores = new Float64Array(options.bands);
    this.refined = new Float64Array(P);
    this.refineScratch = new Float64Array(2 * P);
    this.refineActive = new Uint8Array(P);
    this.order = new Int32Array(candidates);
    this.unitSpectra = P > 1 ? (k ? k.f32(bins * this.unitLayout.stride) : new Float32Array(bins * this.unitLayout.stride)) : null;
    this.freshOut = k ? k.f32(4) : new Float32Array(4);
    const groups = P > 1 ? Math.ceil(P / 4) : 0;
    this.freshChans = new Int32Array(8 * groups);
    this.freshIdx = [];
    for (let g = 0; g < groups; g++) {
      const lane = (i: number) => model.pairs[Math.min(4 * g + i, P - 1)]!;
      const a = [0, 1, 2, 3].map((i) => lane(i)[0]);
      const b = [0, 1, 2, 3].map((i) => lane(i)[1]);
      this.freshChans.set([...a, ...b], 8 * g);
      if (k) {
        const idx = k.u8(32 * this.unitLayout.nv);
        GccKernels.swizzles(a, b, this.unitLayout.nv, idx);
        this.freshIdx.push(idx);
      }
    }
    if (k) {
      const theirs = [...this.kSpectra, this.kPacked!, ...this.invMag, ...this.weightedInv.filter((w) => w.length > 0), this.power, this.weights, this.binScale, this.bandScores, this.evidence, this.useBand, this.freshOut, ...this.freshIdx];
      if (this.unitSpectra) theirs.push(this.unitSpectra);
      for (const pc of this.correlators) theirs.push(pc.accRe, pc.accIm);
      if (!theirs.every((view) => k.owns(view))) throw new Error('HopAnalyzer: a kernel array is outside the kernels memory');
    }
    this.result = {
      index: 0,
      timeS: 0,
      levelDbfs: -Infinity,
      channelLevelsDbfs: new Float64Array(channels),
      onset: 0,
      snrDb: 0,
      bandSnrDb: new Float64Array(options.bands),
      confidence: 0,
      agree: 0,
      share: 0,
      evidence: 0,
      apertureWaves: 0,
      fresh: 0,
      freshZ: 0,
      valid: false,
      tdoaS: new Float64Array(P),
      pairOwnTdoaS: new Float64Array(P),
      offClosure: false,
      sourceCount: 0,
      sources: Array.from({ length: options.maxSources }, () => ({ azimuthDeg: 0, elevationDeg: null, score: 0, centreHz: NaN, underLouder: false, aliasOf: -1 })),
      bandVoteWeight: new Float64Array(options.bands),
      bandVoteCandidate: new Int32Array(options.bands),
      bandVoteTdoaS: new Float64Array(options.bands),
      bands: this.bands,
      dominantBand: -1,
      supportFirstBand: -1,
      supportLastBand: -1,
      pairPeak: new Float64Array(P),
      pairAgreement: new Float64Array(P),
    };
  }

  /**
   * The pair correlations of the last hop (in model.pairs order), for pictures of the evidence
   * (direction/evidence-map.ts); null when the hop was silent and computed none. Read right
   * after process(): the next hop overwrites them. Costs nothing unless called (then the curves of
   * the pairs the direction search does not read, --search-pairs, are computed for this hop).
   */
  lastCorrelations(): readonly PairCorrelator[] | null {
    if (!this.lastHopCorrelated) return null;
    // The pairs the direction search does not read had no curve computed this hop: now they do.
    if (!this.allCurves) {
      this.correlate(this.model.pairs.length, null);
      this.allCurves = true;
    }
    return this.correlators;
  }

  /**
   * Buffers for the next frame, one per channel, in the kernels' memory: a framer that writes the
   * frame there (Framer's `buffers`) and passes them to process() saves a copy per channel per
   * hop. Null on the JavaScript path (any Float64Arrays do there).
   */
  inputFrames(): readonly Float64Array[] | null {
    return this.kernels ? this.kFrames : null;
  }

  /**
   * Analyse one hop. `frames[c]` holds the frame's raw samples of channel c (length = frame).
   * The stages below, in order (public so that the benchmark can time each one: test/bench/stages.ts).
   */
  process(frames: readonly Float64Array[]): HopResult {
    this.spectraStage(frames);
    this.weightStage();
    const sounded = this.lastSounding;
    this.lastSounding = false;
    if (this.crossSpectraStage() && !this.skipQuietHop(sounded)) {
      this.searchedHops++;
      this.correlationStage();
      this.fusionStage(this.candidateStage());
    }
    // a watch is for one hop: the tracker hands in its predictions after each
    this.watched?.clear();
    return this.result;
  }

  /**
   * Give the FFT's buffers back (RealFft.release): for a process that makes many analyses one
   * after another (benchmarks, the accuracy matrix). The analyzer must not be used afterwards.
   */
  release(): void {
    this.fft.release();
  }

  /**
   * Directions to look for in the next hop (./watched-directions.ts): azimuth and elevation
   * (degrees, NaN when unknown) of each of the first `count`, in the array's frame. Arrays of
   * two mics ignore it (one pair's phase says too little).
   */
  watch(azimuthDeg: ArrayLike<number>, elevationDeg: ArrayLike<number>, halfWidthDeg: ArrayLike<number>, count: number): void {
    this.watched?.setWatched(azimuthDeg, elevationDeg, halfWidthDeg, count);
  }

  /** Stage 1: levels, window, one real FFT per channel, per-bin power and 1 / |X|. */
  spectraStage(frames: readonly Float64Array[]): void {
    const n = this.frame;
    const res = this.result;
    const { firstBin: k0, endBin: k1 } = this.bands;
    res.index = this.hopIndex;
    res.timeS = (this.hopIndex * this.hop + n / 2) / this.sampleRate;
    this.hopIndex++;

    let totalMs = 0;
    const power = this.power;
    const kern = this.kernels;
    power.fill(0, k0, k1);
    for (let c = 0; c < this.channels; c++) {
      let sumSquares: number;
      if (kern) {
        // The frame into the kernels' memory (unless the framer wrote it there), windowed there
        // (float32), then into PFFFT's input.
        const kf = this.kFrames[c]!;
        if (frames[c] !== kf) kf.set(frames[c]!);
        sumSquares = kern.window1(kf, this.kWindow!, this.kWindowed!);
        (this.windowed as Float32Array).set(this.kWindowed!);
      } else sumSquares = windowFrame(frames[c]!, this.window, this.windowed);
      const meanSquare = sumSquares / n;
      totalMs += meanSquare;
      res.channelLevelsDbfs[c] = toDb(meanSquare);
      const spec = this.spectra[c]!;
      this.fft.forwardInterleaved(this.windowed, spec);
      const inv = this.invMag[c]!;
      // with many pairs, the unit spectra of the fresh coherence too (freshCoherence)
      if (kern) {
        const copy = this.kSpectra[c]!;
        copy.set(this.kSpectraBins[c]!, 2 * k0);
        kern.magnitudes(copy, power, inv, k0, k1, this.unitSpectra, c, this.unitLayout);
      } else magnitudes(spec, power, inv, k0, k1, this.unitSpectra, c, this.unitLayout);
    }
    res.levelDbfs = toDb(totalMs / this.channels);
  }

  /**
   * Stage 2: onset weights, the weight memory, each band's SNR over its noise floor and its
   * evidence (from its SNR, smoothed over the memory, times log2(1 + its width in bins)).
   * Within a band the bins count by their onset and presence weights; between bands, by
   * evidence: the correlation for the candidates gives each band the say of its evidence.
   */
  weightStage(): void {
    const res = this.result;
    const bands = this.bands;
    const { firstBin: k0, endBin: k1 } = bands;
    const power = this.power;
    if (this.quietForget < 1) this.forgetEnteredBins(power, k0, k1);
    res.onset = this.onset.update(power, k0, k1, this.weights);
    const bandSnrDb = res.bandSnrDb;
    const mem = this.memory;
    const acc = this.weightAcc;
    const weights = this.weights;
    const binScale = this.binScale;
    const snrMem = this.snrMem;
    const kern = this.kernels;
    const sums = this.kBandSums;
    if (this.quietForget < 1) {
      this.forgetQuietBins();
      this.keepBeforeRise(k0, k1);
    }
    if (kern) {
      kern.bandSums(power, this.onset.noiseFloor, acc, weights, mem, sums[0]!, sums[1]!, this.bandWeight, k0, k1);
      this.onset.bandSnrDbOfSums(bands.count, sums[0]!, sums[1]!, bandSnrDb);
    } else {
      this.onset.bandSnrDb(bands, power, bandSnrDb);
      for (let k = k0; k < k1; k++) acc[k] = mem * acc[k]! + weights[k]!;
    }
    let snr = 0;
    for (let b = 0; b < bands.count; b++) {
      const start = bands.start[b]!;
      const end = bands.end[b]!;
      let s = 0;
      if (kern) s = this.bandWeight[b]!;
      else for (let k = start; k < end; k++) s += acc[k]!;
      this.bandWeight[b] = s;
      const bandSnr = bandSnrDb[b]!;
      if (bandSnr > snr) snr = bandSnr;
      const smoothed = (snrMem[b] = mem * snrMem[b]! + (1 - mem) * bandSnr);
      const e = s > 1e-9 ? evidenceGain(smoothed) * this.bandWidthWeight[b]! : 0;
      this.evidence[b] = e;
      const g = e / Math.max(1e-12, s);
      binScale.fill(g, start, end);
    }
    res.snrDb = snr;
  }

  /**
   * Bins that a much louder sound enters this hop (ENTER_HELD) forget what their memory held,
   * cross-spectrum and weight, before this hop is added: the new caller is read from its own
   * sound; bins whose rise began the hop before drop what they held before it (undoBeforeRise).
   * Runs before the onset weigher's update (it compares with the held powers and weights the hop
   * before left, and keeps them for keepBeforeRise). Only bins that still hold something are touched.
   */
  private forgetEnteredBins(power: Float64Array, k0: number, k1: number): void {
    const acc = this.weightAcc;
    const list = this.quietBins;
    this.undoBeforeRise(power);
    const n = this.stillHolding(list, this.onset.listEntered(power, k0, k1, this.weights, list, ENTER_HELD, ENTER_RISING), list);
    if (n > 0) {
      for (let i = 0; i < n; i++) acc[list[i]!] = 0;
      this.scaleCrossSpectra(list, n, 0);
    }
    const w = this.weights;
    const held = this.onset.heldPower;
    const wBefore = this.weightsBefore;
    const heldBefore = this.heldBefore;
    for (let k = k0; k < k1; k++) {
      wBefore[k] = w[k]!;
      heldBefore[k] = held[k]!;
    }
  }

  /** Bins whose rise began the hop before (keepBeforeRise) and that now stand ENTER_HELD over what they held before it drop the memory from before the rise. */
  private undoBeforeRise(power: Float64Array): void {
    const acc = this.weightAcc;
    const mem = this.memory;
    const heldBeforeRise = this.heldBefore;
    for (let i = 0; i < this.riseCount; i++) {
      const k = this.riseList[i]!;
      if (!(power[k]! > ENTER_HELD * heldBeforeRise[k]!)) continue;
      acc[k] = Math.max(0, acc[k]! - mem * this.riseW[k]!);
      for (let p = 0; p < this.correlators.length; p++) {
        const pc = this.correlators[p]!;
        pc.accRe[k]! -= mem * this.riseRe[p]![k]!;
        pc.accIm[k]! -= mem * this.riseIm[p]![k]!;
      }
    }
  }

  /**
   * Of the bins whose rise begins this hop (list[0 .. n)), those standing CHANGED_SNR over their
   * noise floor whose fresh cross-spectra agree with their memory by less than CHANGED_AGREE,
   * or whose phases, taken as delays, stand CHANGED_DELAY_S from the memory's, forget it
   * (cross-spectrum and weight), where single hops are trusted (TRUST_MIN, its running mean
   * updated here); the others are left in list[0 .. returned count).
   */
  private forgetChangedBins(list: Int32Array, n: number): number {
    const learn = this.prevValid && n >= TRUST_BINS;
    if (!learn && !(this.freshTrust >= TRUST_MIN)) return n;
    this.freshCrossOf(list, n);
    if (learn) {
      this.trustHops++;
      this.freshTrust += Math.max(TRUST_RATE, 1 / this.trustHops) * (this.risingAgreement(list, n) - this.freshTrust);
    }
    if (!(this.freshTrust >= TRUST_MIN)) return n;
    const P = this.model.pairs.length;
    const fr = this.riseFreshRe;
    const fi = this.riseFreshIm;
    const acc = this.weightAcc;
    // The bins that forget, in the scratch list forgetQuietBins and forgetEnteredBins have done with this hop.
    const forget = this.quietBins;
    let forgotten = 0;
    let kept = 0;
    for (let i = 0; i < n; i++) {
      const k = list[i]!;
      let dot = 0;
      let mag = 0;
      // The pairs' phase differences between memory and fresh, squared and summed (rad^2).
      let phaseSq = 0;
      if (this.power[k]! >= CHANGED_SNR * this.onset.noiseFloor[k]!) {
        for (let p = 0; p < P; p++) {
          const pc = this.correlators[p]!;
          const mr = pc.accRe[k]!;
          const mi = pc.accIm[k]!;
          const xr = fr[i * P + p]!;
          const xi = fi[i * P + p]!;
          const re = mr * xr + mi * xi;
          dot += re;
          mag += Math.sqrt(mr * mr + mi * mi);
          const d = Math.atan2(mr * xi - mi * xr, re);
          phaseSq += d * d;
        }
      }
      if (mag > 0 && (dot < CHANGED_AGREE * mag || phaseSq > this.changedPhaseSq[k]!)) {
        acc[k] = 0;
        forget[forgotten++] = k;
      } else list[kept++] = k;
    }
    if (forgotten > 0) this.scaleCrossSpectra(forget, forgotten, 0);
    return kept;
  }

  /**
   * The rising bins' (list[0 .. n)) fresh cross-spectra steered to the answer of the hop before
   * (prevLags; the phase convention of hopCoherenceF32): their mean over bins and pairs, 1 when
   * every bin is heard from that direction. Reads freshCrossOf's arrays.
   */
  private risingAgreement(list: Int32Array, n: number): number {
    const P = this.model.pairs.length;
    let sum = 0;
    for (let p = 0; p < P; p++) {
      const step = (2 * Math.PI * this.prevLags[p]!) / this.frame;
      // The steering phasor e^(i step k), advanced bin by bin from the first listed bin (the list is in order).
      const c1 = Math.cos(step);
      const s1 = Math.sin(step);
      let k = list[0]!;
      let pr = Math.cos(step * k);
      let pi = Math.sin(step * k);
      for (let i = 0; i < n; i++) {
        for (const next = list[i]!; k < next; k++) {
          const t = pr * c1 - pi * s1;
          pi = pr * s1 + pi * c1;
          pr = t;
        }
        sum += this.riseFreshRe[i * P + p]! * pr - this.riseFreshIm[i * P + p]! * pi;
      }
    }
    return sum / (n * P);
  }

  /** This hop's unit cross-spectra conj(X_a) X_b (0 for an empty bin) at the bins list[0 .. n), every pair: riseFreshRe / riseFreshIm[i P + p]. */
  private freshCrossOf(list: Int32Array, n: number): void {
    const pairs = this.model.pairs;
    const P = pairs.length;
    for (let p = 0; p < P; p++) {
      const [a, b] = pairs[p]!;
      const A = this.spectra[a]!;
      const B = this.spectra[b]!;
      const invA = this.invMag[a]!;
      const invB = this.invMag[b]!;
      for (let i = 0; i < n; i++) unitCrossInto(A, B, invA, invB, list[i]!, this.riseFreshRe, this.riseFreshIm, i * P + p);
    }
  }

  /**
   * The bins whose rise begins this hop (their onset weight reaches ENTER_RISING): those another
   * caller enters forget their memory (forgetChangedBins); the others' memory before this hop is kept aside.
   */
  private keepBeforeRise(k0: number, k1: number): void {
    const w = this.weights;
    const before = this.weightsBefore;
    const acc = this.weightAcc;
    const list = this.riseList;
    let n = 0;
    for (let k = k0; k < k1; k++) {
      // The index is always written and kept only when the bin qualifies (no branch on noise).
      list[n] = k;
      n += w[k]! >= ENTER_RISING && before[k]! < ENTER_RISING && acc[k]! > QUIET_HELD ? 1 : 0;
    }
    n = this.forgetChangedBins(list, n);
    this.riseCount = n;
    for (let i = 0; i < n; i++) this.riseW[list[i]!] = acc[list[i]!]!;
    for (let p = 0; p < this.correlators.length; p++) {
      const pc = this.correlators[p]!;
      const re = this.riseRe[p]!;
      const im = this.riseIm[p]!;
      for (let i = 0; i < n; i++) {
        const k = list[i]!;
        re[k] = pc.accRe[k]!;
        im[k] = pc.accIm[k]!;
      }
    }
  }

  /**
   * Bins that sound has left (back within QUIET_RATIO of their noise mean after standing LOUD_RATIO over it) forget the cross-spectrum they hold
   * faster than the memory does (--quiet-memory): a call that starts just after another
   * caller's ended is not read in that caller's direction from the bins it left behind. Their
   * weight memory keeps the usual decay, so a band's coherence falls as what filled it fades.
   * Only bins that still hold something are touched.
   */
  private forgetQuietBins(): void {
    // The bins that sound has left, found by the onset weigher's pass over the bins this hop.
    const n = this.stillHolding(this.onset.quietList, this.onset.quietCount, this.quietBins);
    if (n > 0) this.scaleCrossSpectra(this.quietBins, n, this.quietForget);
  }

  /** Of the bins found[0 .. count), those whose weight memory still holds something (QUIET_HELD), written to out (may be found); returns how many. */
  private stillHolding(found: Int32Array, count: number, out: Int32Array): number {
    const acc = this.weightAcc;
    let n = 0;
    for (let i = 0; i < count; i++) if (acc[found[i]!]! > QUIET_HELD) out[n++] = found[i]!;
    return n;
  }

  /** Every pair's cross-spectrum memory at the bins list[0 .. n) times r. */
  private scaleCrossSpectra(list: Int32Array, n: number, r: number): void {
    if (this.accAddresses !== null) {
      this.kernels!.scaleListed(this.accAddresses, list, n, r);
      return;
    }
    for (const pc of this.correlators) {
      const re = pc.accRe;
      const im = pc.accIm;
      for (let i = 0; i < n; i++) {
        const k = list[i]!;
        re[k]! *= r;
        im[k]! *= r;
      }
    }
  }

  /**
   * Stage 3: the pair cross-spectra into the memory. Returns false for a silent hop (digital
   * silence, or the first hops that only learn the noise floor): its estimate is cleared and
   * the later stages are skipped (nights are mostly quiet).
   */
  crossSpectraStage(): boolean {
    const res = this.result;
    const { firstBin: k0, endBin: k1 } = this.bands;
    const pairs = this.model.pairs;
    const mem = this.memory;
    // weights x 1/|X_a| once per channel, shared by the pairs that channel leads
    const weights = this.weights;
    const kern = this.kernels;
    for (let c = 0; c < this.channels; c++) {
      if (!this.leadsPair[c]) continue;
      const inv = this.invMag[c]!;
      const out = this.weightedInv[c]!;
      if (kern) kern.times(weights, inv, out, k0, k1);
      else for (let k = k0; k < k1; k++) out[k] = weights[k]! * inv[k]!;
    }
    for (let p = 0; p < pairs.length; p++) {
      const [a, b] = pairs[p]!;
      if (kern) kern.accumulate(this.correlators[p]!, this.kSpectra[a]!, this.kSpectra[b]!, this.weightedInv[a]!, this.invMag[b]!, k0, k1, mem);
      else this.correlators[p]!.accumulate(this.spectra[a]!, this.spectra[b]!, this.weightedInv[a]!, this.invMag[b]!, k0, k1, mem);
    }
    const silent = this.hopIndex <= FLOOR_WARMUP_HOPS || res.levelDbfs < this.options.silenceDbfs;
    this.lastHopCorrelated = !silent;
    if (silent) {
      this.clearEstimate(res);
      this.prevValid = false;
    }
    return !silent;
  }

  /**
   * Stage 3b (--quiet-search-every n > 1): a hop whose best band stays below --detect-snr,
   * when the hop before had nothing sounding (`sounded`), skips the direction stages, except
   * every n-th such hop in a row (a steady source that the noise floor has learned sounds only
   * through its fresh coherence, which the direction stages measure). A skipped hop reports no
   * estimate, as a hop where nothing sounds (the tracker takes no candidate from those); its
   * correlations are computed only when asked for (lastCorrelations). Returns true to skip.
   */
  private skipQuietHop(sounded: boolean): boolean {
    const every = this.options.quietSearchEvery;
    if (every <= 1 || sounded || this.result.snrDb >= this.options.detectSnrDb) {
      this.quietRun = 0;
      return false;
    }
    if (++this.quietRun % every === 0) return false;
    this.clearEstimate(this.result);
    this.prevValid = false;
    this.allCurves = false;
    return true;
  }

  /**
   * Stage 4: each pair's correlation over the lags it can take (one inverse FFT per pair). With
   * fusion, every band has the say of its evidence; without, the plain weighted GCC-PHAT over all bins.
   */
  correlationStage(): void {
    const curves = this.model.curvePairs;
    this.allCurves = curves.length === this.model.pairs.length;
    this.correlate(curves.length, curves);
  }

  /** The correlations of pairs[0 .. count) (`which` null), or of the pairs which[0 .. count). */
  private correlate(count: number, which: Int32Array | null): void {
    const { firstBin: k0, endBin: k1 } = this.bands;
    const kern = this.kernels;
    for (let i = 0; i < count; i++) {
      const pc = this.correlators[which ? which[i]! : i]!;
      if (kern) {
        kern.scalePack(pc, this.options.voting ? this.binScale : null, this.kPacked!, k0, k1);
        this.fft.inversePackedLags(this.kPackedBins!, k0, k1, pc.gcc, pc.maxLag + 1);
      } else if (this.options.voting) pc.correlateScaled(this.fft, this.binScale, k0, k1);
      else pc.correlate(this.fft, k0, k1);
    }
  }

  /** Stage 5: the direction model's candidates (peaks of a pair, or the SRP search), one per peak; returns their count. */
  candidateStage(): number {
    const P = this.model.pairs.length;
    return this.dedupe(this.model.findCandidates(this.correlators, this.options.maxCandidates, this.candLags, this.candScores), P);
  }

  /** Stage 6: band fusion over the K candidates, ranking, refinement, directions and confidence. */
  fusionStage(K: number): void {
    this.fuseBands(this.result, K, this.model.pairs.length);
  }

  /**
   * Drop candidates whose lags all lie within a sample of a better one's (two grid maxima on
   * one peak would split its band votes). Returns the count kept, compacted in order.
   */
  private dedupe(count: number, P: number): number {
    const lags = this.candLags;
    let kept = 0;
    for (let c = 0; c < count; c++) {
      let dup = false;
      for (let d = 0; d < kept && !dup; d++) {
        let far = false;
        for (let p = 0; p < P; p++) {
          if (Math.abs(lags[c * P + p]! - lags[d * P + p]!) >= SAME_PEAK_LAGS) {
            far = true;
            break;
          }
        }
        dup = !far;
      }
      if (dup) continue;
      if (kept !== c) {
        for (let p = 0; p < P; p++) lags[kept * P + p] = lags[c * P + p]!;
        this.candScores[kept] = this.candScores[c]!;
      }
      kept++;
    }
    return kept;
  }

  /** No estimate for this hop. */
  private clearEstimate(res: HopResult): void {
    res.sourceCount = 0;
    res.valid = false;
    res.confidence = 0;
    res.agree = 0;
    res.share = 0;
    res.evidence = 0;
    res.apertureWaves = 0;
    res.fresh = 0;
    res.freshZ = 0;
    res.dominantBand = -1;
    res.supportFirstBand = -1;
    res.supportLastBand = -1;
    res.tdoaS.fill(NaN);
    res.pairOwnTdoaS.fill(NaN);
    res.offClosure = false;
    res.bandVoteWeight.fill(0);
    res.bandVoteCandidate.fill(-1);
    res.bandVoteTdoaS.fill(NaN);
    res.pairPeak.fill(0);
    res.pairAgreement.fill(0);
  }

  /**
   * Band fusion over the candidates of this hop: each band's coherence with each candidate,
   * fused by evidence (./band-fusion.ts); the candidates ranked; then, best first, each
   * candidate's lags refined on the bands that support it and turned into a direction. The
   * first is the hop's answer, with its confidence.
   */
  private fuseBands(res: HopResult, K: number, P: number): void {
    const opts = this.options;
    this.clearEstimate(res);
    if (K === 0) return;
    const fusion = this.fusion.fuse(K, this.bandCoherence(K, P), this.evidence);
    res.evidence = fusion.totalEvidence;
    if (!(fusion.totalEvidence > 0)) return;
    const order = this.rankCandidates(K, P, fusion);
    let fusedTotal = 0;
    for (let c = 0; c < K; c++) fusedTotal += fusion.fused[c]!;
    const winFused = fusion.fused[order[0]!]!;
    if (!(winFused > 0)) return;
    this.reportBandVotes(res, fusion, P);

    for (let i = 0; i < K && res.sourceCount < opts.maxSources; i++) {
      const c = order[i]!;
      const f = fusion.fused[c]!;
      if (i > 0 && (f < SOURCE_RATIO * winFused || f <= 0)) continue;
      // The bands that support this candidate refine its lags (every band with evidence for
      // the plain peak's winner when none supports it).
      const support = this.supportOf(c, fusion);
      if (support.first < 0) {
        if (opts.voting || i > 0) continue;
        for (let b = 0; b < this.bands.count; b++) this.useBand[b] = this.evidence[b]! > 0 ? 1 : 0;
      }
      if (this.kernels) this.kernels.refineLags(this.correlators, this.frame, this.useBand, this.candLags, c * P, this.refined, this.refineScratch, this.refineActive);
      else refineLagLanes(this.correlators, this.bands, this.useBand, this.candLags, c * P, this.refined, this.refineScratch, this.refineActive);
      if (!this.model.solve(this.refined, 0, this.dir)) continue;
      if (this.binDirections !== null) this.lowSupport[res.sourceCount] = this.lowShare(support);
      const src = res.sources[res.sourceCount]!;
      src.azimuthDeg = this.dir.azimuthDeg;
      src.elevationDeg = this.dir.elevationDeg;
      src.centreHz = support.centreHz;
      src.underLouder = false;
      src.aliasOf = -1;
      if (res.sourceCount === 0) {
        this.setWinner(res, f, fusion.totalEvidence, fusedTotal, support, P);
        src.score = 1;
      } else {
        src.score = Math.max(0, Math.min(1, f / winFused));
      }
      res.sourceCount++;
    }
    // A direction is reported when it is confident enough and something sounds now: the hop
    // stands out of the noise floor, or its own spectra are coherent with the answer (a steady
    // source). Otherwise the memory would carry the last call's direction through silence; a
    // hop where nothing sounds has confidence 0.
    const sounding = res.snrDb >= opts.detectSnrDb || res.freshZ >= FRESH_Z;
    this.prevValid = res.sourceCount > 0;
    if (this.prevValid) for (let p = 0; p < P; p++) this.prevLags[p] = res.tdoaS[p]! * this.sampleRate;
    if (sounding && res.sourceCount > 0 && this.binDirections !== null) this.addBinSources(res, this.binDirections, winFused);
    if (sounding && res.sourceCount > 0 && this.watched !== null && this.watched.watchCount > 0) this.addWatchedSources(res, this.watched, winFused);
    if (!sounding) res.confidence = 0;
    this.lastSounding = sounding;
    res.valid = res.sourceCount > 0 && sounding && res.confidence >= opts.minConfidence;
  }

  /**
   * Two callers heard as one (addBinSources): the two heaviest bin peaks that are
   * BIN_SOURCE_APART_DEG apart, the lighter holding BIN_SOURCE_RATIO of the heavier, with the
   * winner between them and more than MERGED_APART_DEG from each. At low frequencies a small
   * array's beam is wider than two callers' spacing and the search finds one peak between them;
   * the bins, each heard from one caller, do not. The winner is read at the nearer peak (its own
   * caller, bent towards the other); addBinSources then reads the other caller as any caller the
   * bins hear apart. The hop's delays (tdoaS) stay the fusion's.
   */
  private splitMergedWinner(winner: HopResult['sources'][number], bins: BinDirections, usable: number): void {
    let b = -1;
    for (let j = 1; j < usable && b < 0; j++) if (Math.abs(wrapDeg(bins.peakAz[j]! - bins.peakAz[0]!)) > BIN_SOURCE_APART_DEG) b = j;
    if (b < 0 || bins.peakMass[b]! < BIN_SOURCE_RATIO * bins.peakMass[0]!) return;
    const d0 = wrapDeg(winner.azimuthDeg - bins.peakAz[0]!);
    const dB = wrapDeg(winner.azimuthDeg - bins.peakAz[b]!);
    if (Math.sign(d0) === Math.sign(dB) || Math.abs(d0) <= MERGED_APART_DEG || Math.abs(dB) <= MERGED_APART_DEG || Math.abs(d0) + Math.abs(dB) > 180) return;
    readAtPeak(winner, bins, Math.abs(dB) < Math.abs(d0) ? b : 0);
  }

  /**
   * The winner heard with another caller (a further source of the fusion or a bin peak holding
   * BIN_SOURCE_RATIO of the winner's own, each BIN_SOURCE_APART_DEG from it), or within the
   * memory's time constant after one, is read at its own bin peak, the nearest within
   * BIN_CORRECT_DEG: the fusion refined its lags on bands the other caller shares, or shared
   * until lately (the memory still holds them: a chorus read 4 deg off for 0.1 s after the other
   * stopped). Alone for longer, it keeps the fusion's answer (finer than the bins' histogram).
   * The hop's delays (tdoaS) stay the fusion's, as in splitMergedWinner.
   */
  private winnerAtOwnPeak(res: HopResult, winner: HopResult['sources'][number], bins: BinDirections, usable: number): void {
    const own = nearestPeak(bins, usable, winner.azimuthDeg, null);
    if (own < 0) return;
    let other = false;
    for (let i = 1; i < res.sourceCount && !other; i++) other = Math.abs(wrapDeg(res.sources[i]!.azimuthDeg - winner.azimuthDeg)) > BIN_SOURCE_APART_DEG;
    for (let j = 0; j < usable && !other; j++) {
      other = j !== own && Math.abs(wrapDeg(bins.peakAz[j]! - bins.peakAz[own]!)) > BIN_SOURCE_APART_DEG && bins.peakMass[j]! >= BIN_SOURCE_RATIO * bins.peakMass[own]!;
    }
    if (other) this.otherAt = this.hopIndex;
    else if (this.otherAt < 0 || this.hopIndex - this.otherAt > this.otherHops) return;
    readAtPeak(winner, bins, own);
  }

  /**
   * The callers the bins hear apart (./bin-directions.ts), from the peaks that hold at least
   * SOURCE_RATIO of the winner's fused evidence: a further source of the fusion with
   * BIN_CORRECT_LOW_SHARE of its support below the bins' top frequency is read at the nearest
   * peak within BIN_CORRECT_DEG (not the winner's); a peak BIN_SOURCE_APART_DEG from every source
   * holding BIN_SOURCE_RATIO of the winner's is a further source, scored by that ratio, and so is
   * a peak of several runs holding RUNS_SOURCE_RATIO of it, scored at least RUNS_SCORE
   * (underLouder when it holds less than BIN_SOURCE_RATIO). The winner keeps the fusion's answer,
   * unless it lies between two bin peaks (two callers heard as one: splitMergedWinner) or the hop
   * holds another caller, or held one lately (winnerAtOwnPeak).
   */
  private addBinSources(res: HopResult, bins: BinDirections, winFused: number): void {
    // Every BIN_EVERY_HOPS hops: the memory they read changes over about 14 hops (0.15 s), so the
    // hops between take the last one's peaks (hops that did not sound count too).
    const reuse = this.binsAt >= 0 && this.hopIndex - 1 - this.binsAt < BIN_EVERY_HOPS;
    const count = reuse ? bins.peakCount : bins.analyse(this.correlators, this.weightAcc, this.binScale);
    if (!reuse) this.binsAt = this.hopIndex - 1;
    const winner = res.sources[0]!;
    // Peaks count in the fusion's units (evidence): one must hold what a further source of the
    // fusion needs (usable), or be a peak of runs (RUNS_SOURCE_RATIO).
    let usable = 0;
    while (usable < count && bins.peakMass[usable]! >= SOURCE_RATIO * winFused) usable++;
    if (this.lowSupport[0]! >= BIN_CORRECT_LOW_SHARE) {
      this.splitMergedWinner(winner, bins, usable);
      this.winnerAtOwnPeak(res, winner, bins, usable);
    }
    // Those within BIN_SOURCE_APART_DEG of the winner are its own; the largest of them is what a
    // caller the fusion did not report is weighed against (the same measure), or the winner's
    // fused evidence when the bins do not hear it.
    let ref = 0;
    for (let j = 0; j < usable; j++) {
      const own = Math.abs(wrapDeg(bins.peakAz[j]! - winner.azimuthDeg)) <= BIN_SOURCE_APART_DEG;
      this.peakOfWinner[j] = own ? 1 : 0;
      if (own) ref = Math.max(ref, bins.peakMass[j]!);
    }
    if (ref === 0) ref = winFused;
    for (let i = 1; i < res.sourceCount; i++) {
      if (this.lowSupport[i]! < BIN_CORRECT_LOW_SHARE) continue;
      const src = res.sources[i]!;
      const best = nearestPeak(bins, usable, src.azimuthDeg, this.peakOfWinner);
      if (best >= 0) readAtPeak(src, bins, best);
    }
    for (let j = 0; j < count && res.sourceCount < this.options.maxSources; j++) {
      const az = bins.peakAz[j]!;
      const mass = bins.peakMass[j]!;
      const runs = bins.peakRuns[j]! >= SEVERAL_RUNS && mass >= RUNS_SOURCE_RATIO * ref;
      if (!runs && (j >= usable || mass < BIN_SOURCE_RATIO * ref)) continue;
      if (!apartFromSources(res, az, BIN_SOURCE_APART_DEG)) continue;
      const el = winner.elevationDeg === null || bins.peakEl[j] !== bins.peakEl[j] ? null : bins.peakEl[j]!;
      addFurtherSource(res, az, el, Math.min(1, Math.max(runs ? RUNS_SCORE : 0, mass / ref)), runs && mass < BIN_SOURCE_RATIO * ref);
    }
  }

  /**
   * The watched directions heard under the winner (./watched-directions.ts): a find holding
   * WATCH_RATIO of the winner's fused evidence, WATCH_APART_DEG from every source the hop
   * reports, is a further source heard under a louder caller (underLouder), scored by that share
   * (at least RUNS_SCORE). A watched direction that the winner's own bins fit as well (an aliased
   * lobe), WATCH_APART_DEG from every source, is a source too: an alias of the winner (aliasOf 0),
   * scored by the share of the winner's bin evidence that fits it.
   */
  private addWatchedSources(res: HopResult, watched: WatchedDirections, winFused: number): void {
    // prevLags: the winner's lags, set for the next hop's selection (fuseBands)
    const winner = res.sources[0]!;
    const m = watched.search(this.spectra, this.invMag, this.prevLags, this.weights, this.weightAcc, this.binScale, this.power, this.onset, winner.azimuthDeg, winner.elevationDeg ?? 0, WATCH_APART_DEG);
    for (let w = 0; w < m && res.sourceCount < this.options.maxSources; w++) {
      const az = watched.foundAz[w]!;
      const mass = watched.foundMass[w]!;
      if (az !== az || mass < WATCH_RATIO * winFused || !apartFromSources(res, az, WATCH_APART_DEG)) continue;
      addFurtherSource(res, az, winner.elevationDeg === null ? null : watched.elevationOf(w), Math.min(1, Math.max(RUNS_SCORE, mass / winFused)), true);
    }
    // The winner read at a lobe: where a watched caller should be, its bins fit as well.
    for (let w = 0; w < m && res.sourceCount < this.options.maxSources; w++) {
      const az = watched.aliasAz[w]!;
      if (az !== az || !apartFromSources(res, az, WATCH_APART_DEG)) continue;
      addFurtherSource(res, az, winner.elevationDeg === null ? null : watched.elevationOf(w), watched.aliasShare[w]!, false, 0);
    }
  }

  /** Normalised band coherence: s[b, c] = sum over pairs of Re(A e^{j w tau}) / (pairs * band weight). */
  private bandCoherence(K: number, P: number): Float64Array {
    const S = this.options.maxCandidates;
    const s = this.bandScores;
    s.fill(0);
    // Per pair, all candidates in one pass (the same sums, in the same order over pairs, as one candidate at a time).
    // Bands without evidence take no part in the fusion: their scores are not needed.
    const kern = this.kernels;
    if (kern) {
      // two pairs per pass (their sums added pair by pair, as one at a time)
      for (let p = 0; p < P; p += 2) {
        kern.addBandScores(this.correlators[p]!, p + 1 < P ? this.correlators[p + 1]! : null, this.frame, this.candLags, p, p + 1, P, K, s, S, 0, this.evidence);
      }
    } else {
      // the same sums: an odd last pair alone
      for (let p = 0; p < P; p++) addBandScoresLanes(this.correlators[p]!, this.bands, this.candLags, p, P, K, s, S, 0, this.evidence, p === P - 1 && P % 2 === 1);
    }
    for (let b = 0; b < this.bands.count; b++) {
      const norm = 1 / (P * Math.max(1e-12, this.bandWeight[b]!));
      for (let c = 0; c < K; c++) s[b * S + c]! *= norm;
    }
    return s;
  }

  /**
   * The candidates best first: by fused score, with a preference for the previous hop's answer
   * so that a steady sound whose bands disagree on the delay (a baffle between the mics) keeps
   * one answer. Without fusion (--no-voting) the plain peak of the weighted correlation wins.
   */
  private rankCandidates(K: number, P: number, fusion: FusionResult): Int32Array {
    const voting = this.options.voting;
    const sel = this.selection;
    for (let c = 0; c < K; c++) {
      sel[c] = voting ? fusion.fused[c]! : c === 0 ? 1 : 0;
      if (voting && this.prevValid && this.nearPrevious(c, P)) sel[c]! *= 1 + STICKINESS;
    }
    const order = this.order;
    for (let c = 0; c < K; c++) order[c] = c;
    for (let i = 1; i < K; i++) {
      const v = order[i]!;
      let j = i - 1;
      while (j >= 0 && sel[order[j]!]! < sel[v]!) {
        order[j + 1] = order[j]!;
        j--;
      }
      order[j + 1] = v;
    }
    return order;
  }

  /** Each band's vote for the viewer: the candidate it supports and its support, relative to the strongest band's. */
  private reportBandVotes(res: HopResult, fusion: FusionResult, P: number): void {
    const B = this.bands.count;
    let maxSupport = 0;
    for (let b = 0; b < B; b++) maxSupport = Math.max(maxSupport, fusion.supportWeight[b]!);
    for (let b = 0; b < B; b++) {
      const c = fusion.supportOf[b]!;
      if (c < 0) continue;
      res.bandVoteWeight[b] = maxSupport > 0 ? fusion.supportWeight[b]! / maxSupport : 0;
      res.bandVoteCandidate[b] = c;
      res.bandVoteTdoaS[b] = this.candLags[c * P]! / this.sampleRate;
    }
  }

  /** The bands that support candidate c (marked in useBand): their range, the strongest, and the support-weighted frequency. */
  private supportOf(c: number, fusion: FusionResult): BandSupport {
    const sup = this.support;
    sup.first = -1;
    sup.last = -1;
    sup.dominant = -1;
    sup.weightSum = 0;
    let freqSum = 0;
    let domWeight = 0;
    for (let b = 0; b < this.bands.count; b++) {
      const use = fusion.supportOf[b] === c;
      this.useBand[b] = use ? 1 : 0;
      if (!use) continue;
      if (sup.first < 0) sup.first = b;
      sup.last = b;
      freqSum += fusion.supportWeight[b]! * this.bands.centreHz[b]!;
      sup.weightSum += fusion.supportWeight[b]!;
      if (fusion.supportWeight[b]! > domWeight) {
        domWeight = fusion.supportWeight[b]!;
        sup.dominant = b;
      }
    }
    sup.centreHz = sup.weightSum > 0 ? freqSum / sup.weightSum : NaN;
    return sup;
  }

  /** The share of a candidate's band support (supportOf, just computed) in bands centred below the bin directions' top frequency. */
  private lowShare(support: BandSupport): number {
    if (!(support.weightSum > 0)) return 0;
    let low = 0;
    for (let b = support.first; b <= support.last; b++) {
      if (this.useBand[b] === 1 && this.bands.centreHz[b]! < this.binTopHz) low += this.fusion.result.supportWeight[b]!;
    }
    return low / support.weightSum;
  }

  /** The hop's answer (the first candidate with a direction): its confidence features, confidence, delays and band range. */
  private setWinner(res: HopResult, fused: number, totalEvidence: number, fusedTotal: number, support: BandSupport, P: number): void {
    const { first, last } = support;
    this.features.agree = Math.min(1, fused / totalEvidence);
    this.features.share = fusedTotal > 0 ? fused / fusedTotal : 0;
    this.features.snrDb = res.snrDb;
    res.apertureWaves = support.weightSum > 0 ? support.centreHz * this.apertureS : 0;
    this.features.apertureWaves = res.apertureWaves;
    this.features.evidence = totalEvidence;
    this.features.onset = res.onset;
    this.features.fresh = this.freshCoherence(first, last, P);
    res.fresh = this.features.fresh;
    res.freshZ = first < 0 ? 0 : res.fresh * Math.sqrt(2 * (this.bands.end[last]! - this.bands.start[first]!) * P);
    res.agree = this.features.agree;
    res.share = this.features.share;
    res.confidence = confidenceOf(this.features);
    res.dominantBand = support.dominant;
    res.supportFirstBand = first;
    res.supportLastBand = last;
    for (let p = 0; p < P; p++) res.tdoaS[p] = this.refined[p]! / this.sampleRate;
    // Each pair's own strong peak nearest the answer (the pairs whose curves the search read; the
    // others stay NaN), and the closure over them (./closure.ts): the answer off its pairs' own
    // peaks (offClosure, for the geometry check, ./stream-checks.ts), and a sound at every mic at
    // once when those lie nearer zero delay than the answer's (COMMON_MODE_SHARE; on an array in
    // three dimensions no direction gives every pair zero delay, so the search settles anywhere):
    // such a hop has confidence 0.
    const curves = this.model.curvePairs;
    let sq = 0;
    let own2 = 0;
    let answer2 = 0;
    let n = 0;
    for (let i = 0; P > 1 && i < curves.length; i++) {
      const p = curves[i]!;
      const found = this.correlators[p]!.peaks(OWN_PEAKS, this.ownLag, this.ownHeight);
      const answer = this.refined[p]!;
      let best = NaN;
      for (let k = 0; k < found; k++) {
        if (k > 0 && !(this.ownHeight[k]! >= OWN_PEAK_SHARE * this.ownHeight[0]!)) break;
        if (!(Math.abs(this.ownLag[k]! - answer) >= Math.abs(best - answer))) best = this.ownLag[k]!;
      }
      res.pairOwnTdoaS[p] = best / this.sampleRate;
      if (best !== best) continue;
      sq += (answer - best) * (answer - best);
      own2 += best * best;
      answer2 += answer * answer;
      n++;
    }
    res.offClosure = n > 0 && closureOff(Math.sqrt(sq / n), this.largestLag);
    if (res.offClosure && Math.sqrt(own2) < COMMON_MODE_SHARE * Math.sqrt(answer2)) res.confidence = 0;
    if (this.diagnostics) this.pairDiagnostics(res, P);
  }

  /**
   * This hop's own coherence with the winner's refined lags over its supporting bands (first to
   * last), averaged over the pairs: a sounding source, not the memory of one.
   */
  private freshCoherence(first: number, last: number, P: number): number {
    if (first < 0) return 0;
    const k0 = this.bands.start[first]!;
    const k1 = this.bands.end[last]!;
    const inv = this.invMag;
    const kern = this.kernels;
    if (P === 1) {
      const [a, b] = this.model.pairs[0]!;
      const v = kern ? kern.hopCoherence1(this.kSpectra[a]!, this.kSpectra[b]!, inv[a]!, inv[b]!, this.refined[0]!, this.frame, k0, k1) : hopCoherenceF32(this.spectra[a]!, this.spectra[b]!, inv[a]!, inv[b]!, this.frame, this.refined[0]!, k0, k1, this.freshPh);
      return Math.max(0, v);
    }
    // Many pairs: from each channel's unit spectrum (spectraStage), four pairs a pass (float32 lanes).
    const ut = this.unitSpectra!;
    const layout = this.unitLayout;
    const out = this.freshOut;
    let sum = 0;
    for (let g = 0, p = 0; p < P; g++, p += 4) {
      const w = Math.min(4, P - p);
      if (kern) kern.hopCoherenceT(ut, layout, this.freshIdx[g]!, this.refined, p, w, this.frame, k0, k1, out);
      else {
        setPhasorsF32(this.freshPh, 0, this.refined, p, 1, w, this.frame, k0);
        hopCoherenceLanes(ut, layout, this.freshChans, 8 * g, this.freshPh, k0, k1, out);
      }
      for (let i = 0; i < w; i++) sum += out[i]! / (k1 - k0);
    }
    return Math.max(0, sum / P);
  }

  /** Candidate c's lags all lie within STICKY_LAGS samples of the previous hop's answer. */
  private nearPrevious(c: number, P: number): boolean {
    for (let p = 0; p < P; p++) if (Math.abs(this.candLags[c * P + p]! - this.prevLags[p]!) > STICKY_LAGS) return false;
    return true;
  }

  /**
   * Per pair, for the strongest source: the pair's own normalised correlation peak at its
   * refined lag (all analysis bins), and the share of the winner's band votes in which this
   * pair agrees (its own band score reaches the voting threshold).
   */
  private pairDiagnostics(res: HopResult, P: number): void {
    const B = this.bands.count;
    const own = this.pairBandScores;
    let totalWeight = 0;
    for (let b = 0; b < B; b++) totalWeight += this.bandWeight[b]!;
    for (let p = 0; p < P; p++) {
      own.fill(0);
      addBandScores(this.correlators[p]!, this.bands, this.refined[p]!, own, 1, 0);
      let peak = 0;
      let agree = 0;
      let voted = 0;
      for (let b = 0; b < B; b++) {
        peak += own[b]!;
        if (!this.useBand[b]) continue;
        const w = res.bandVoteWeight[b]! > 0 ? res.bandVoteWeight[b]! : 1;
        voted += w;
        if (own[b]! >= MIN_SUPPORT * this.bandWeight[b]!) agree += w;
      }
      res.pairPeak[p] = totalWeight > 0 ? Math.max(0, Math.min(1, peak / totalWeight)) : 0;
      res.pairAgreement[p] = voted > 0 ? agree / voted : 0;
    }
  }
}

function toDb(meanSquare: number): number {
  return meanSquare > 0 ? 10 * Math.log10(meanSquare) : -200;
}

/**
 * Of the bin peaks [0, usable), the nearest to azimuth `az` within BIN_CORRECT_DEG, skipping those
 * `skip` marks 1 (null: none); -1 for none.
 */
function nearestPeak(bins: BinDirections, usable: number, az: number, skip: Uint8Array | null): number {
  let best = -1;
  let bestD = BIN_CORRECT_DEG;
  for (let j = 0; j < usable; j++) {
    const d = Math.abs(wrapDeg(bins.peakAz[j]! - az));
    if ((skip === null || skip[j] === 0) && d < bestD) {
      bestD = d;
      best = j;
    }
  }
  return best;
}

/** Does azimuth az lie more than deg from every source the hop reports so far? */
function apartFromSources(res: HopResult, az: number, deg: number): boolean {
  for (let i = 0; i < res.sourceCount; i++) if (!(Math.abs(wrapDeg(az - res.sources[i]!.azimuthDeg)) > deg)) return false;
  return true;
}

/** Report a further source heard in single bins (no band centre), an alias of source aliasOf when that is given; the caller checks there is room (maxSources). */
function addFurtherSource(res: HopResult, az: number, el: number | null, score: number, underLouder: boolean, aliasOf = -1): void {
  const src = res.sources[res.sourceCount++]!;
  src.azimuthDeg = az;
  src.elevationDeg = el;
  src.score = score;
  src.centreHz = NaN;
  src.underLouder = underLouder;
  src.aliasOf = aliasOf;
}

/** A reported source read at bin peak j: its azimuth, and its elevation when both it and the peak have one. */
function readAtPeak(src: HopResult['sources'][number], bins: BinDirections, j: number): void {
  src.azimuthDeg = bins.peakAz[j]!;
  if (src.elevationDeg !== null && bins.peakEl[j] === bins.peakEl[j]) src.elevationDeg = bins.peakEl[j]!;
}

/**
 * A band's evidence from its SNR over its noise floor (dB, smoothed over the evidence memory):
 * it grows as the square root of the SNR in tens of dB, up to EVIDENCE_SNR_CAP_DB. Chosen on
 * the accuracy matrix (test/bench/matrix/) against a linear and a saturating growth: a call
 * 10-17 dB over a coherent rumble wins, and two steady sources near the floor still share the
 * bands fairly.
 */
function evidenceGain(snrDb: number): number {
  return Math.sqrt(Math.min(snrDb, EVIDENCE_SNR_CAP_DB) / 10);
}

import { UsageError } from '../util/errors.js';
import { searchLagLimit } from '../direction/direction-model.js';
import { isPowerOfTwo } from '../dsp/fft.js';
import { flagOption, numberOption, resolveWithSpecs, type OptionSpec } from '../options/option-spec.js';

/** What the user can set about the analysis (all optional; defaults below). */
export interface AnalysisOptions {
  /** Frame length in samples (power of two); default: the smallest power of two of at least 20 ms. */
  frame?: number;
  /** Hop in samples; default frame / 2. */
  hop?: number;
  /** Number of frequency bands fused. */
  bands?: number;
  minFreqHz?: number;
  maxFreqHz?: number;
  /** Onset weighting strength in [0, 1]: 0 off, 1 steady sound counts nothing. */
  onsetWeight?: number;
  /** Time constant (s) of the cross-spectrum memory that keeps onsets' evidence. */
  memoryS?: number;
  /** Time constant (s) with which a bin back at its noise floor forgets its cross-spectrum (at most memoryS). */
  quietMemoryS?: number;
  /** Time constant (s) of the background power that onsets are measured against. */
  backgroundS?: number;
  /** How fast (dB/s) each bin's noise floor may rise; bins near their floor count little. 0 = off. */
  floorRiseDbS?: number;
  /** Hops quieter than this (dBFS) give no direction (digital silence; detection is by SNR). */
  silenceDbfs?: number;
  /** A hop gives a direction only when its best band stands this far (dB) above its noise floor, or its own spectra are coherent with the answer. */
  detectSnrDb?: number;
  /** Directions with a lower confidence are reported as null. */
  minConfidence?: number;
  /** Direction candidates compared by the band fusion per hop, best first. */
  maxCandidates?: number;
  /** Most simultaneous sources reported per hop (at most maxCandidates). */
  maxSources?: number;
  /** Evidence-weighted band fusion on (default) or off (plain weighted GCC-PHAT peak). */
  voting?: boolean;
  /** Extra lag allowed beyond the physical limit D/c, as a fraction. */
  lagMargin?: number;
  /** Arrays of 3+ mics: the direction search reads the correlation curves of at most this many pairs, the longest baselines, equal lengths taken whole (0 = all). */
  searchPairs?: number;
  /** Quiet hops (best band below detectSnrDb) after a hop where nothing sounded get the direction search only every n-th hop (1 = every hop). */
  quietSearchEvery?: number;
}

export type ResolvedAnalysis = Required<AnalysisOptions>;

export const ANALYSIS_DEFAULTS = {
  bands: 8,
  minFreqHz: 150,
  maxFreqHz: 12000,
  onsetWeight: 0.97,
  memoryS: 0.15,
  quietMemoryS: 0.04,
  backgroundS: 0.02,
  floorRiseDbS: 1,
  silenceDbfs: -100,
  detectSnrDb: 5,
  minConfidence: 0.3,
  maxCandidates: 4,
  maxSources: 3,
  voting: true,
  lagMargin: 0.1,
  searchPairs: 15,
  quietSearchEvery: 1,
} as const;

/** Most candidates the band fusion can compare per hop (--max-candidates), and so sources per hop. */
export const CANDIDATE_LIMIT = 8;
/** Sources reported per hop unless --max-sources says otherwise (fewer when --max-candidates is lower). */
const DEFAULT_MAX_SOURCES = ANALYSIS_DEFAULTS.maxSources;

/** Largest frame the analysis takes (samples). */
export const MAX_FRAME = 65536;

/**
 * Default frame: the smallest power of two of at least DEFAULT_FRAME_S (1024 samples at 48 and
 * 44.1 kHz, 512 at 22.05 and 16 kHz, 2048 at 96 kHz). Until this rule the default was the power
 * of two nearest 21.3 ms, 256 samples (16 ms, hop 8 ms) at 16 kHz, a rate many small USB arrays
 * record at: the motion matrix' 23 draws rendered at 16 kHz (sources under 80 % complete / id
 * switches / tracks holding two) gave crossings 71 / 50 / 28 with 256 and 54 / 35 / 16 with 512,
 * passes 21 / 68 / 0 and 13 / 31 / 0, choruses 31 / 45 / 15 and 29 / 50 / 23 (at 48 kHz: 47 / 20 /
 * 10, 8 / 18 / 0, 26 / 34 / 11); ten further draws at 16 kHz, crossings 34 / 19 / 11 and 23 /
 * 11 / 6, passes 10 / 27 / 0 and 12 / 18 / 0, choruses 16 / 26 / 10 and 12 / 10 / 5. Shorter hops
 * than the 10.7 ms the tracker's defaults were chosen at do not help it: 48 kHz crossings with a
 * hop of 384 samples (8 ms) 53 / 61 / 16 against 44 / 27 / 6 with 512 (before
 * READING_VARIANCE_SCALE, src/track/tracker.ts), and at 16 kHz a frame of 512 with a hop of 128
 * 61 / 75 / 25.
 */
const DEFAULT_FRAME_S = 0.02;
export function defaultFrame(sampleRate: number): number {
  // less a hair: 20 ms that is a power of two exactly stays that power despite rounding
  return Math.max(64, 2 ** Math.ceil(Math.log2(DEFAULT_FRAME_S * sampleRate - 1e-9)));
}

/**
 * A frame must hold this many times the largest lag searched: a delay of L samples leaves
 * frame - L samples that both channels share, and the correlation is circular, so with
 * frame >= 4 L at least three quarters of the frame overlap and no lag in the window can wrap
 * onto another (common practice, no source).
 */
export const FRAME_PER_LAG = 4;

/** The array whose delays the frame must hold: its largest mic distance and the speed of sound. */
export interface ArraySpan {
  readonly largestSpacingM: number;
  readonly speedOfSound: number;
}

/** Smallest power-of-two frame (at least 64) that holds FRAME_PER_LAG x the largest lag. */
export function minimumFrame(largestLag: number): number {
  return Math.max(64, 2 ** Math.ceil(Math.log2(FRAME_PER_LAG * largestLag)));
}

const ANY_FREQ_HZ = 1_000_000;

export const analysisOptionSpecs: readonly OptionSpec<keyof AnalysisOptions>[] = [
  numberOption('frame', 'frame', 'samples', null, { min: 64, max: MAX_FRAME, integer: true }, 'analysis frame length in samples, a power of two', { defaultText: 'smallest power of two of at least 20 ms (1024 at 48 kHz, 512 at 16 kHz), larger for wide arrays' }),
  numberOption('hop', 'hop', 'samples', null, { min: 1, max: MAX_FRAME, integer: true }, 'hop between frames in samples', { defaultText: 'frame / 2' }),
  numberOption('bands', 'bands', 'n', ANALYSIS_DEFAULTS.bands, { min: 1, max: 32, integer: true }, 'frequency bands whose evidence is fused into the delay (1 to 32)'),
  numberOption('minFreqHz', 'min-freq', 'hz', ANALYSIS_DEFAULTS.minFreqHz, { min: 0, max: ANY_FREQ_HZ, unit: 'Hz' }, 'lowest frequency analysed'),
  numberOption('maxFreqHz', 'max-freq', 'hz', ANALYSIS_DEFAULTS.maxFreqHz, { min: 0, max: ANY_FREQ_HZ, minExclusive: true, unit: 'Hz' }, 'highest frequency analysed (capped below Nyquist)'),
  numberOption('onsetWeight', 'onset-weight', '0..1', ANALYSIS_DEFAULTS.onsetWeight, { min: 0, max: 1 }, 'how much more sharp onsets count than steady sound (0 = off)'),
  numberOption('memoryS', 'memory', 's', ANALYSIS_DEFAULTS.memoryS, { min: 0, max: 10, unit: 's' }, 'time constant of the evidence memory (0 = each hop alone)'),
  numberOption('quietMemoryS', 'quiet-memory', 's', ANALYSIS_DEFAULTS.quietMemoryS, { min: 0, max: 10, unit: 's' }, 'how fast a frequency bin that has fallen back to its noise floor forgets the direction it held (time constant; --memory or more = never sooner)'),
  numberOption('backgroundS', 'background', 's', ANALYSIS_DEFAULTS.backgroundS, { min: 0, max: 60, minExclusive: true, unit: 's' }, 'time constant of the background level onsets are measured against'),
  numberOption('floorRiseDbS', 'floor-rise', 'dB/s', ANALYSIS_DEFAULTS.floorRiseDbS, { min: 0, max: 100, minExclusive: true, unit: 'dB/s' }, 'how fast the per-bin noise floor may rise (sound that stays longer becomes background); sound near its floor counts little'),
  numberOption('silenceDbfs', 'silence', 'dbfs', ANALYSIS_DEFAULTS.silenceDbfs, { min: -200, max: 0, unit: 'dBFS' }, 'hops quieter than this give no direction (digital silence; detection is by --detect-snr)'),
  numberOption('detectSnrDb', 'detect-snr', 'dB', ANALYSIS_DEFAULTS.detectSnrDb, { min: 0, max: 60, unit: 'dB' }, 'a hop gives a direction only when its best band stands this far above its noise floor, or its own spectra are coherent with the answer (a steady source)'),
  numberOption('minConfidence', 'min-confidence', '0..1', ANALYSIS_DEFAULTS.minConfidence, { min: 0, max: 1 }, 'directions less confident than this are reported as null'),
  numberOption('maxCandidates', 'max-candidates', 'n', ANALYSIS_DEFAULTS.maxCandidates, { min: 1, max: CANDIDATE_LIMIT, integer: true }, `direction candidates the band fusion compares per hop, best first (1 to ${CANDIDATE_LIMIT}; fewer: less work per hop)`),
  numberOption('maxSources', 'max-sources', 'n', null, { min: 1, max: CANDIDATE_LIMIT, integer: true }, 'most simultaneous sources reported per hop, at most --max-candidates', { defaultText: `${DEFAULT_MAX_SOURCES}, at most --max-candidates` }),
  flagOption('voting', 'no-voting', true, 'turn band fusion off (plain weighted GCC-PHAT peak, for comparison)'),
  numberOption('lagMargin', 'lag-margin', 'fraction', ANALYSIS_DEFAULTS.lagMargin, { min: 0, max: 1 }, 'extra delay allowed beyond spacing / c'),
  numberOption('searchPairs', 'search-pairs', 'n', ANALYSIS_DEFAULTS.searchPairs, { min: 0, max: 28, integer: true }, 'arrays of 3 or more mics: the direction search reads the correlation curves of at most this many pairs, those of the longest baselines, pairs of equal length taken whole and the longest group always (0 = all; 15 keeps every pair of up to 6 mics and 12 of an 8-mic circle); fewer: fewer inverse FFTs per hop; the band fusion and the refinement use every pair'),
  numberOption('quietSearchEvery', 'quiet-search-every', 'n', ANALYSIS_DEFAULTS.quietSearchEvery, { min: 1, max: 100, integer: true }, 'hops whose best band stays below --detect-snr, after a hop where nothing sounded, get the direction search only every n-th hop: less CPU on quiet nights, but a steady source that the noise floor has learned is found up to n hops later (1 = every hop)'),
];

/**
 * Apply defaults and validate against the stream's sample rate. Each value is checked against
 * its spec; then what depends on the stream: with the array's span, the frame must hold its
 * largest delay (minimumFrame): the default frame grows to fit, and a frame given too small is
 * an error that names --frame and the smallest frame that fits.
 */
export function resolveAnalysisOptions(opts: AnalysisOptions, sampleRate: number, span?: ArraySpan): ResolvedAnalysis {
  const given = resolveWithSpecs<AnalysisOptions>(analysisOptionSpecs, opts, 'analysis');
  const lagMargin = given.lagMargin!;
  const largestLag = span ? searchLagLimit(span.largestSpacingM, sampleRate, span.speedOfSound, lagMargin) : 0;
  const needed = span ? minimumFrame(largestLag) : 64;
  const spanText = span
    ? `the array spans ${span.largestSpacingM.toFixed(2)} m, a delay of up to ${largestLag} samples at ${sampleRate} Hz (with --lag-margin), and a frame must hold ${FRAME_PER_LAG} times that`
    : '';
  if (needed > MAX_FRAME) {
    throw new UsageError(`${spanText}: ${needed} samples, more than the largest frame ${MAX_FRAME}; use a lower sample rate or a smaller array`);
  }
  const frame = given.frame ?? Math.max(defaultFrame(sampleRate), needed);
  check(isPowerOfTwo(frame), '--frame', `${frame} must be a power of two from 64 to ${MAX_FRAME} (e.g. 1024)`);
  check(frame >= needed, '--frame', `${frame} is too small for this array: ${spanText}; give --frame ${needed} or more, or leave --frame out to size the frame from the array`);
  const hop = given.hop ?? frame / 2;
  check(hop <= frame, '--hop', `${hop} must be a whole number of samples from 1 to the frame length ${frame}`);
  const maxSources = given.maxSources ?? Math.min(DEFAULT_MAX_SOURCES, given.maxCandidates!);
  check(maxSources <= given.maxCandidates!, '--max-sources', `${maxSources} is more than --max-candidates ${given.maxCandidates}: a hop reports at most as many sources as it compares candidates; raise --max-candidates or lower --max-sources`);
  const r = { ...given, frame, hop, maxSources } as ResolvedAnalysis;
  const nyquist = sampleRate / 2;
  check(r.minFreqHz < nyquist, '--min-freq', `${r.minFreqHz} Hz must be between 0 and the Nyquist frequency ${nyquist} Hz`);
  r.maxFreqHz = Math.min(r.maxFreqHz, 0.95 * nyquist);
  check(r.maxFreqHz > r.minFreqHz, '--max-freq', `${r.maxFreqHz} Hz must be above --min-freq ${r.minFreqHz} Hz`);
  const binHz = sampleRate / frame;
  check((r.maxFreqHz - r.minFreqHz) / binHz >= 2 * r.bands, '--bands', `${r.bands} bands do not fit in ${r.minFreqHz}-${r.maxFreqHz} Hz with ${frame}-sample frames: use fewer bands, a wider range or longer frames`);
  return r;
}

function check(ok: boolean, flag: string, what: string): void {
  if (!ok) throw new UsageError(`${flag} ${what}`);
}

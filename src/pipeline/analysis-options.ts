import { UsageError } from '../errors.js';
import { searchLagLimit } from '../direction/direction-model.js';
import { isPowerOfTwo } from '../dsp/fft.js';
import type { OptionSpec } from '../option-spec.js';

/** What the user can set about the analysis (all optional; defaults below). */
export interface AnalysisOptions {
  /** Frame length in samples (power of two); default: the power of two nearest 21 ms. */
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
  /** Most simultaneous sources reported per hop. */
  maxSources?: number;
  /** Evidence-weighted band fusion on (default) or off (plain weighted GCC-PHAT peak). */
  voting?: boolean;
  /** Extra lag allowed beyond the physical limit D/c, as a fraction. */
  lagMargin?: number;
}

export type ResolvedAnalysis = Required<AnalysisOptions>;

export const ANALYSIS_DEFAULTS = {
  bands: 8,
  minFreqHz: 150,
  maxFreqHz: 12000,
  onsetWeight: 0.97,
  memoryS: 0.15,
  backgroundS: 0.02,
  floorRiseDbS: 1,
  silenceDbfs: -100,
  detectSnrDb: 5,
  minConfidence: 0.3,
  maxSources: 3,
  voting: true,
  lagMargin: 0.1,
} as const;

/** Largest frame the analysis takes (samples). */
export const MAX_FRAME = 65536;

/** Default frame: the power of two nearest to 21.3 ms (1024 samples at 48 kHz). */
export function defaultFrame(sampleRate: number): number {
  const target = 0.02133 * sampleRate;
  return Math.max(64, 2 ** Math.round(Math.log2(target)));
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

function num(raw: string): number {
  const n = Number(raw);
  if (raw.trim() === '' || !Number.isFinite(n)) throw new Error(`'${raw}' is not a number.`);
  return n;
}

export const analysisOptionSpecs: readonly OptionSpec[] = [
  { key: 'frame', flag: '--frame <samples>', help: 'analysis frame length in samples, a power of two', defaultValue: 'nearest to 21 ms (1024 at 48 kHz), larger when the array\'s delays need it', parse: num },
  { key: 'hop', flag: '--hop <samples>', help: 'hop between frames in samples', defaultValue: 'frame / 2', parse: num },
  { key: 'bands', flag: '--bands <n>', help: 'frequency bands whose evidence is fused into the delay (1 to 32)', defaultValue: ANALYSIS_DEFAULTS.bands, parse: num },
  { key: 'minFreqHz', flag: '--min-freq <hz>', help: 'lowest frequency analysed', defaultValue: ANALYSIS_DEFAULTS.minFreqHz, parse: num },
  { key: 'maxFreqHz', flag: '--max-freq <hz>', help: 'highest frequency analysed (capped below Nyquist)', defaultValue: ANALYSIS_DEFAULTS.maxFreqHz, parse: num },
  { key: 'onsetWeight', flag: '--onset-weight <0..1>', help: 'how much more sharp onsets count than steady sound (0 = off)', defaultValue: ANALYSIS_DEFAULTS.onsetWeight, parse: num },
  { key: 'memoryS', flag: '--memory <s>', help: 'time constant of the evidence memory (0 = each hop alone)', defaultValue: ANALYSIS_DEFAULTS.memoryS, parse: num },
  { key: 'backgroundS', flag: '--background <s>', help: 'time constant of the background level onsets are measured against', defaultValue: ANALYSIS_DEFAULTS.backgroundS, parse: num },
  { key: 'floorRiseDbS', flag: '--floor-rise <dB/s>', help: 'how fast the per-bin noise floor may rise (sound that stays longer becomes background); sound near its floor counts little', defaultValue: ANALYSIS_DEFAULTS.floorRiseDbS, parse: num },
  { key: 'silenceDbfs', flag: '--silence <dbfs>', help: 'hops quieter than this give no direction (digital silence; detection is by --detect-snr)', defaultValue: ANALYSIS_DEFAULTS.silenceDbfs, parse: num },
  { key: 'detectSnrDb', flag: '--detect-snr <dB>', help: 'a hop gives a direction only when its best band stands this far above its noise floor, or its own spectra are coherent with the answer (a steady source)', defaultValue: ANALYSIS_DEFAULTS.detectSnrDb, parse: num },
  { key: 'minConfidence', flag: '--min-confidence <0..1>', help: 'directions less confident than this are reported as null', defaultValue: ANALYSIS_DEFAULTS.minConfidence, parse: num },
  { key: 'maxSources', flag: '--max-sources <n>', help: 'most simultaneous sources per hop (1 to 8)', defaultValue: ANALYSIS_DEFAULTS.maxSources, parse: num },
  { key: 'voting', flag: '--no-voting', help: 'turn band fusion off (plain weighted GCC-PHAT peak, for comparison)', defaultValue: null },
  { key: 'lagMargin', flag: '--lag-margin <fraction>', help: 'extra delay allowed beyond spacing / c', defaultValue: ANALYSIS_DEFAULTS.lagMargin, parse: num },
];

function check(ok: boolean, flag: string, what: string): void {
  if (!ok) throw new UsageError(`${flag} ${what}`);
}

/**
 * Apply defaults and validate against the stream's sample rate. With the array's span, the
 * frame must hold its largest delay (minimumFrame): the default frame grows to fit, and a
 * frame given too small is an error that names --frame and the smallest frame that fits.
 */
export function resolveAnalysisOptions(opts: AnalysisOptions, sampleRate: number, span?: ArraySpan): ResolvedAnalysis {
  const lagMargin = opts.lagMargin ?? ANALYSIS_DEFAULTS.lagMargin;
  check(lagMargin >= 0 && lagMargin <= 1, '--lag-margin', `${lagMargin} must be between 0 and 1`);
  const largestLag = span ? searchLagLimit(span.largestSpacingM, sampleRate, span.speedOfSound, lagMargin) : 0;
  const needed = span ? minimumFrame(largestLag) : 64;
  const spanText = span
    ? `the array spans ${span.largestSpacingM.toFixed(2)} m, a delay of up to ${largestLag} samples at ${sampleRate} Hz (with --lag-margin), and a frame must hold ${FRAME_PER_LAG} times that`
    : '';
  if (needed > MAX_FRAME) {
    throw new UsageError(`${spanText}: ${needed} samples, more than the largest frame ${MAX_FRAME}; use a lower sample rate or a smaller array`);
  }
  const frame = opts.frame ?? Math.max(defaultFrame(sampleRate), needed);
  check(isPowerOfTwo(frame) && frame >= 64 && frame <= MAX_FRAME, '--frame', `${frame} must be a power of two from 64 to ${MAX_FRAME} (e.g. 1024)`);
  check(frame >= needed, '--frame', `${frame} is too small for this array: ${spanText}; give --frame ${needed} or more, or leave --frame out to size the frame from the array`);
  const hop = opts.hop ?? frame / 2;
  check(Number.isInteger(hop) && hop >= 1 && hop <= frame, '--hop', `${hop} must be a whole number of samples from 1 to the frame length ${frame}`);
  const r: ResolvedAnalysis = { ...ANALYSIS_DEFAULTS, ...stripUndefined(opts), frame, hop };
  check(Number.isInteger(r.bands) && r.bands >= 1 && r.bands <= 32, '--bands', `${r.bands} must be a whole number from 1 to 32`);
  const nyquist = sampleRate / 2;
  check(r.minFreqHz >= 0 && r.minFreqHz < nyquist, '--min-freq', `${r.minFreqHz} Hz must be between 0 and the Nyquist frequency ${nyquist} Hz`);
  r.maxFreqHz = Math.min(r.maxFreqHz, 0.95 * nyquist);
  check(r.maxFreqHz > r.minFreqHz, '--max-freq', `${r.maxFreqHz} Hz must be above --min-freq ${r.minFreqHz} Hz`);
  const binHz = sampleRate / frame;
  check((r.maxFreqHz - r.minFreqHz) / binHz >= 2 * r.bands, '--bands', `${r.bands} bands do not fit in ${r.minFreqHz}-${r.maxFreqHz} Hz with ${frame}-sample frames: use fewer bands, a wider range or longer frames`);
  check(r.onsetWeight >= 0 && r.onsetWeight <= 1, '--onset-weight', `${r.onsetWeight} must be between 0 and 1`);
  check(r.memoryS >= 0 && r.memoryS <= 10, '--memory', `${r.memoryS} s must be between 0 and 10 s`);
  check(r.backgroundS > 0 && r.backgroundS <= 60, '--background', `${r.backgroundS} s must be above 0 and at most 60 s`);
  check(r.floorRiseDbS > 0 && r.floorRiseDbS <= 100, '--floor-rise', `${r.floorRiseDbS} dB/s must be above 0 and at most 100`);
  check(r.silenceDbfs <= 0 && r.silenceDbfs >= -200, '--silence', `${r.silenceDbfs} dBFS must be between -200 and 0`);
  check(r.detectSnrDb >= 0 && r.detectSnrDb <= 60, '--detect-snr', `${r.detectSnrDb} dB must be between 0 and 60`);
  check(r.minConfidence >= 0 && r.minConfidence <= 1, '--min-confidence', `${r.minConfidence} must be between 0 and 1`);
  check(Number.isInteger(r.maxSources) && r.maxSources >= 1 && r.maxSources <= 8, '--max-sources', `${r.maxSources} must be a whole number from 1 to 8`);
  check(r.lagMargin >= 0 && r.lagMargin <= 1, '--lag-margin', `${r.lagMargin} must be between 0 and 1`);
  return r;
}

function stripUndefined<T extends object>(o: T): Partial<T> {
  const out: Partial<T> = {};
  for (const [k, v] of Object.entries(o)) if (v !== undefined) (out as Record<string, unknown>)[k] = v;
  return out;
}

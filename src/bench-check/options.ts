/**
 * Every setting of the bench check in one place: the options object, its defaults, one spec
 * per option (the CLI turns them into flags, --help shows them) and validation.
 */
import { UsageError } from '../util/errors.js';
import { numberOption, resolveWithSpecs, type OptionSpec } from '../options/option-spec.js';

export interface BenchCheckOptions {
  /** Length of the pieces a take is cut into for the delay trend, seconds. */
  segmentS: number;
  /** Lowest and highest frequency used for the delays, Hz (the top is capped below Nyquist). */
  minFreqHz: number;
  maxFreqHz: number;
  /** Largest timing offset between channels looked for, seconds. */
  maxOffsetS: number;
  /** Largest relative error of the file's mic distances looked for (0.5 = up to 50 % wider). */
  maxSpacingError: number;
  /** Largest clock drift between channels looked for, ppm. */
  maxDriftPpm: number;
  /** Drift is fitted only when the longest take lasts at least this long, seconds. */
  driftMinSpanS: number;
  /** Tolerances: pass at or under the value, warn up to warnFactor times it, fail beyond. */
  positionTolM: number;
  offsetTolS: number;
  gainTolDb: number;
  driftTolPpm: number;
  residualTolDeg: number;
  warnFactor: number;
}

export const BENCH_CHECK_DEFAULTS: BenchCheckOptions = {
  segmentS: 1,
  minFreqHz: 200,
  maxFreqHz: 16000,
  maxOffsetS: 0.002,
  maxSpacingError: 0.5,
  maxDriftPpm: 1000,
  driftMinSpanS: 20,
  positionTolM: 0.003,
  offsetTolS: 10e-6,
  gainTolDb: 1,
  driftTolPpm: 20,
  residualTolDeg: 2,
  warnFactor: 2,
};

export const benchCheckOptionSpecs: readonly OptionSpec<keyof BenchCheckOptions>[] = [
  numberOption('segmentS', 'segment', 's', BENCH_CHECK_DEFAULTS.segmentS, { min: 0.05, max: 60, unit: 's' }, 'length of the pieces each take is cut into (delay trend, drift)'),
  numberOption('minFreqHz', 'min-freq', 'hz', BENCH_CHECK_DEFAULTS.minFreqHz, { min: 0, max: 100000, unit: 'Hz' }, 'lowest frequency used for the delays'),
  numberOption('maxFreqHz', 'max-freq', 'hz', BENCH_CHECK_DEFAULTS.maxFreqHz, { min: 1, max: 200000, unit: 'Hz' }, 'highest frequency used for the delays (capped below Nyquist)'),
  numberOption('maxOffsetS', 'max-offset', 's', BENCH_CHECK_DEFAULTS.maxOffsetS, { min: 0, max: 0.1, unit: 's' }, 'largest timing offset between channels looked for'),
  numberOption('maxSpacingError', 'max-spacing-error', 'fraction', BENCH_CHECK_DEFAULTS.maxSpacingError, { min: 0, max: 3 }, 'largest relative error of the file\'s mic distances looked for'),
  numberOption('maxDriftPpm', 'max-drift', 'ppm', BENCH_CHECK_DEFAULTS.maxDriftPpm, { min: 0, max: 10000, unit: 'ppm' }, 'largest clock drift between channels looked for'),
  numberOption('driftMinSpanS', 'drift-min-span', 's', BENCH_CHECK_DEFAULTS.driftMinSpanS, { min: 0, max: 1e6, unit: 's' }, 'fit the clock drift only when the longest take lasts at least this long'),
  numberOption('positionTolM', 'tol-position', 'm', BENCH_CHECK_DEFAULTS.positionTolM, { min: 0, max: 1, unit: 'm' }, 'tolerance: mic position (pair: spacing) against the file'),
  numberOption('offsetTolS', 'tol-offset', 's', BENCH_CHECK_DEFAULTS.offsetTolS, { min: 0, max: 1, unit: 's' }, 'tolerance: timing offset of a channel'),
  numberOption('gainTolDb', 'tol-gain', 'db', BENCH_CHECK_DEFAULTS.gainTolDb, { min: 0, max: 60, unit: 'dB' }, 'tolerance: gain of a channel against channel 0'),
  numberOption('driftTolPpm', 'tol-drift', 'ppm', BENCH_CHECK_DEFAULTS.driftTolPpm, { min: 0, max: 1e5, unit: 'ppm' }, 'tolerance: clock drift of a channel against channel 0'),
  numberOption('residualTolDeg', 'tol-residual', 'deg', BENCH_CHECK_DEFAULTS.residualTolDeg, { min: 0, max: 180, unit: 'deg' }, 'tolerance: rms direction error left after the fit'),
  numberOption('warnFactor', 'warn-factor', 'x', BENCH_CHECK_DEFAULTS.warnFactor, { min: 1, max: 100 }, 'a value beyond its tolerance but within this many times it warns; beyond, it fails'),
];

/** Apply defaults and check every value; a bad one throws a UsageError naming its flag. */
export function resolveBenchCheckOptions(given: Partial<BenchCheckOptions>): BenchCheckOptions {
  const out = resolveWithSpecs<BenchCheckOptions>(benchCheckOptionSpecs, given, 'check-array');
  if (out.maxFreqHz <= out.minFreqHz) {
    throw new UsageError(`--max-freq ${out.maxFreqHz} Hz must be above --min-freq ${out.minFreqHz} Hz`);
  }
  return out;
}

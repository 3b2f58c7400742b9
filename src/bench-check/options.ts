/**
 * Every setting of the bench check in one place: the options object, its defaults, one spec
 * per option (the CLI turns them into flags, --help shows them) and validation.
 */
import { UsageError } from '../util/errors.js';
import type { OptionSpec } from '../options/option-spec.js';

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

function num(raw: string): number {
  const n = Number(raw);
  if (raw.trim() === '' || !Number.isFinite(n)) throw new Error(`'${raw}' is not a number.`);
  return n;
}

type Key = keyof BenchCheckOptions;

interface Limit {
  key: Key;
  flag: string;
  help: string;
  min: number;
  max: number;
  /** Shown in --help; the value itself is in BENCH_CHECK_DEFAULTS. */
  shown?: string;
}

const LIMITS: readonly Limit[] = [
  { key: 'segmentS', flag: '--segment <s>', help: 'length of the pieces each take is cut into (delay trend, drift)', min: 0.05, max: 60 },
  { key: 'minFreqHz', flag: '--min-freq <hz>', help: 'lowest frequency used for the delays', min: 0, max: 100000 },
  { key: 'maxFreqHz', flag: '--max-freq <hz>', help: 'highest frequency used for the delays (capped below Nyquist)', min: 1, max: 200000 },
  { key: 'maxOffsetS', flag: '--max-offset <s>', help: 'largest timing offset between channels looked for', min: 0, max: 0.1 },
  { key: 'maxSpacingError', flag: '--max-spacing-error <fraction>', help: 'largest relative error of the file\'s mic distances looked for', min: 0, max: 3 },
  { key: 'maxDriftPpm', flag: '--max-drift <ppm>', help: 'largest clock drift between channels looked for', min: 0, max: 10000 },
  { key: 'driftMinSpanS', flag: '--drift-min-span <s>', help: 'fit the clock drift only when the longest take lasts at least this long', min: 0, max: 1e6 },
  { key: 'positionTolM', flag: '--tol-position <m>', help: 'tolerance: mic position (pair: spacing) against the file', min: 0, max: 1 },
  { key: 'offsetTolS', flag: '--tol-offset <s>', help: 'tolerance: timing offset of a channel', min: 0, max: 1 },
  { key: 'gainTolDb', flag: '--tol-gain <db>', help: 'tolerance: gain of a channel against channel 0', min: 0, max: 60 },
  { key: 'driftTolPpm', flag: '--tol-drift <ppm>', help: 'tolerance: clock drift of a channel against channel 0', min: 0, max: 1e5 },
  { key: 'residualTolDeg', flag: '--tol-residual <deg>', help: 'tolerance: rms direction error left after the fit', min: 0, max: 180 },
  { key: 'warnFactor', flag: '--warn-factor <x>', help: 'a value beyond its tolerance but within this many times it warns; beyond, it fails', min: 1, max: 100 },
];

export const benchCheckOptionSpecs: readonly OptionSpec<Key>[] = LIMITS.map((l) => ({
  key: l.key,
  flag: l.flag,
  help: l.help,
  defaultValue: BENCH_CHECK_DEFAULTS[l.key],
  parse: num,
}));

/** Apply defaults and check every value; a bad one throws a UsageError naming its flag. */
export function resolveBenchCheckOptions(given: Partial<BenchCheckOptions>): BenchCheckOptions {
  const out: BenchCheckOptions = { ...BENCH_CHECK_DEFAULTS };
  for (const l of LIMITS) {
    const v = given[l.key];
    if (v === undefined) continue;
    if (typeof v !== 'number' || !Number.isFinite(v) || v < l.min || v > l.max) {
      throw new UsageError(`${l.flag.split(' ')[0]} ${String(v)} must be a number from ${l.min} to ${l.max}`);
    }
    out[l.key] = v;
  }
  if (out.maxFreqHz <= out.minFreqHz) {
    throw new UsageError(`--max-freq ${out.maxFreqHz} Hz must be above --min-freq ${out.minFreqHz} Hz`);
  }
  return out;
}

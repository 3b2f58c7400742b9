import { UsageError } from '../util/errors.js';
import type { OptionSpec } from '../options/option-spec.js';

export type { OptionSpec };

/**
 * The one home of the options shared by the raw-stream (stdin) and live-recorder sources:
 * sample rate and channel count, with their flags, help, defaults and validation.
 */

/** A raw option value: a string from the command line or a number from a JSON profile. */
export type RawValue = string | number | undefined;

export const MIN_RATE_HZ = 1000;
export const MAX_RATE_HZ = 768000;
/** The most channels bearline analyses (the arrays it is made for have 2 to 8 mics). */
export const MAX_CHANNELS = 8;
export const DEFAULT_BLOCK_FRAMES = 4096;

export const RATE_SPEC: OptionSpec<'sampleRate'> = {
  key: 'sampleRate',
  flag: '--rate <hz>',
  help: `sample rate of the stream in Hz (${MIN_RATE_HZ} to ${MAX_RATE_HZ})`,
  defaultValue: 48000,
};

export const CHANNELS_SPEC: OptionSpec<'channels'> = {
  key: 'channels',
  flag: '--channels <n>',
  help: `number of interleaved channels, one per mic (1 to ${MAX_CHANNELS})`,
  defaultValue: 2,
};

/** The option name as the user typed it, for messages: '--rate <hz>' -> '--rate'. */
export function flagName(spec: OptionSpec): string {
  return spec.flag.split(' ')[0]!;
}

/** A raw value as a number; NaN when it is not one (an empty string is not zero). */
export function toNumber(value: string | number | boolean | null): number {
  return typeof value === 'number' ? value : typeof value === 'string' && value.trim() !== '' ? Number(value) : NaN;
}

/** A whole number within [min, max]; otherwise a UsageError that names the option. */
export function wholeNumberIn(raw: RawValue, spec: OptionSpec, min: number, max: number, unit = ''): number {
  const value = raw === undefined ? spec.defaultValue : raw;
  const n = toNumber(value);
  if (!Number.isInteger(n) || n < min || n > max) {
    throw new UsageError(`${flagName(spec)} must be a whole number from ${min} to ${max}${unit} (got '${String(value)}')`);
  }
  return n;
}

export function resolveSampleRate(raw: RawValue): number {
  return wholeNumberIn(raw, RATE_SPEC, MIN_RATE_HZ, MAX_RATE_HZ, ' Hz');
}

export function resolveChannels(raw: RawValue): number {
  return wholeNumberIn(raw, CHANNELS_SPEC, 1, MAX_CHANNELS);
}

/** Frames per block handed to the analysis (not a user option; callers tune it). */
export function checkBlockFrames(blockFrames: number | undefined): number {
  const n = blockFrames ?? DEFAULT_BLOCK_FRAMES;
  if (!Number.isInteger(n) || n < 1 || n > 1 << 20) throw new RangeError(`blockFrames ${n} is not a whole number from 1 to 1048576`);
  return n;
}

import { numberOption, type NumberSpec } from '../options/option-spec.js';

/**
 * The one home of the options shared by the raw-stream (stdin) and live-recorder sources:
 * sample rate and channel count, with their specs (flags, help, defaults, ranges).
 */

export const MIN_RATE_HZ = 1000;
export const MAX_RATE_HZ = 768000;
/** The most channels bearline analyses (the arrays it is made for have 2 to 8 mics). */
export const MAX_CHANNELS = 8;
export const DEFAULT_BLOCK_FRAMES = 4096;

export const RATE_SPEC: NumberSpec<'sampleRate'> = numberOption(
  'sampleRate',
  'rate',
  'hz',
  48000,
  { min: MIN_RATE_HZ, max: MAX_RATE_HZ, integer: true, unit: 'Hz' },
  'sample rate of the stream in Hz',
);

export const CHANNELS_SPEC: NumberSpec<'channels'> = numberOption(
  'channels',
  'channels',
  'n',
  null,
  { min: 1, max: MAX_CHANNELS, integer: true },
  'number of interleaved channels, one per mic',
  { defaultText: 'the number of mics' },
);

/** Frames per block handed to the analysis (not a user option; callers tune it). */
export function checkBlockFrames(blockFrames: number | undefined): number {
  const n = blockFrames ?? DEFAULT_BLOCK_FRAMES;
  if (!Number.isInteger(n) || n < 1 || n > 1 << 20) throw new RangeError(`blockFrames ${n} is not a whole number from 1 to 1048576`);
  return n;
}

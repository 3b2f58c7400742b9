import { choiceOption, numberOption, resolveWithSpecs, textOption, type OptionSpec } from '../options/option-spec.js';
import { CHANNELS_SPEC, RATE_SPEC } from './stream-options.js';

/**
 * The one home of the live recorder's options: names, flags, help, defaults, validation
 * (src/options/option-spec.ts).
 */

/** The recorder programs bearline runs. Only these names: user text never becomes a program path. */
export const RECORDERS = ['sox', 'rec', 'arecord'] as const;
export type RecorderName = (typeof RECORDERS)[number];

export interface RecorderOptions {
  readonly recorder: RecorderName;
  /** Capture device as the recorder names it (arecord -D, AUDIODEV for sox/rec); null = its default input. */
  readonly device: string | null;
  readonly sampleRate: number;
  readonly channels: number;
  /** Restart the recorder after this many seconds without audio. */
  readonly stallTimeoutS: number;
  /** Give up after this many failed restarts in a row; null = never give up. */
  readonly maxRestarts: number | null;
}

const MAX_DEVICE_LENGTH = 200;

function deviceProblem(raw: string): string | null {
  // Spawned without a shell, so no quoting issues; still refuse what no device name holds.
  if (raw.length > MAX_DEVICE_LENGTH || /[\u0000-\u001f\u007f]/.test(raw) || raw.startsWith('-')) {
    return "is not a device name (list the capture devices with 'arecord -L')";
  }
  return null;
}

export const RECORDER_OPTION_SPECS: readonly OptionSpec<keyof RecorderOptions>[] = [
  choiceOption('recorder', 'recorder', RECORDERS, 'sox', 'program that captures the audio (must be installed and on PATH)'),
  textOption('device', 'device', 'name', null, 'capture device as the recorder names it, e.g. hw:1,0 for arecord', { defaultText: "the recorder's default input", check: deviceProblem }),
  RATE_SPEC,
  CHANNELS_SPEC,
  numberOption('stallTimeoutS', 'stall-timeout', 's', 2, { min: 0.1, max: 600, unit: 's' }, 'restart the recorder when it delivers no audio for this many seconds'),
  numberOption('maxRestarts', 'max-restarts', 'n', null, { min: 0, max: 1e9, integer: true }, 'stop with an error after this many failed restarts in a row', { none: 'never' }),
];

/**
 * Defaults filled in and every value checked; a bad value is a UsageError naming its flag.
 * The channel count has no fixed default: the caller gives it (the number of mics).
 */
export function resolveRecorderOptions(input: Partial<RecorderOptions> & { channels: number }): RecorderOptions {
  return resolveWithSpecs<RecorderOptions>(RECORDER_OPTION_SPECS, input, 'recorder');
}

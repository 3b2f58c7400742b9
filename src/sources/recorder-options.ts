import { UsageError } from '../util/errors.js';
import {
  CHANNELS_SPEC,
  flagName,
  RATE_SPEC,
  resolveChannels,
  resolveSampleRate,
  toNumber,
  type OptionSpec,
  type RawValue,
} from './stream-options.js';

/**
 * The one home of the live recorder's options: names, flags, help, defaults, validation.
 * The CLI turns RECORDER_OPTION_SPECS into commander options and hands the raw values to
 * resolveRecorderOptions; a JSON run profile can hand numbers instead of strings.
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

export interface RecorderOptionsInput {
  recorder?: string;
  device?: string | null;
  sampleRate?: RawValue;
  channels?: RawValue;
  stallTimeoutS?: RawValue;
  maxRestarts?: RawValue | null;
}

const RECORDER_SPEC: OptionSpec<'recorder'> = {
  key: 'recorder',
  flag: '--recorder <name>',
  help: `program that captures the audio: ${RECORDERS.join(', ')} (must be installed and on PATH)`,
  defaultValue: 'sox',
};

const DEVICE_SPEC: OptionSpec<'device'> = {
  key: 'device',
  flag: '--device <name>',
  help: "capture device as the recorder names it, e.g. hw:1,0 for arecord (default: the recorder's default input)",
  defaultValue: null,
};

const STALL_SPEC: OptionSpec<'stallTimeoutS'> = {
  key: 'stallTimeoutS',
  flag: '--stall-timeout <s>',
  help: 'restart the recorder when it delivers no audio for this many seconds',
  defaultValue: 2,
};

const MAX_RESTARTS_SPEC: OptionSpec<'maxRestarts'> = {
  key: 'maxRestarts',
  flag: '--max-restarts <n>',
  help: "stop with an error after this many failed restarts in a row ('never' = keep trying)",
  defaultValue: 'never',
};

export const RECORDER_OPTION_SPECS: readonly OptionSpec<keyof RecorderOptions>[] = [
  RECORDER_SPEC,
  DEVICE_SPEC,
  RATE_SPEC,
  CHANNELS_SPEC,
  STALL_SPEC,
  MAX_RESTARTS_SPEC,
];

const MIN_STALL_S = 0.1;
const MAX_STALL_S = 600;
const MAX_DEVICE_LENGTH = 200;

function resolveRecorder(raw: string | undefined): RecorderName {
  const name = raw ?? RECORDER_SPEC.defaultValue;
  const found = RECORDERS.find((r) => r === name);
  if (found === undefined) {
    throw new UsageError(`${flagName(RECORDER_SPEC)} must be one of ${RECORDERS.join(', ')} (got '${String(name)}'); install one and make sure it is on PATH`);
  }
  return found;
}

function resolveDevice(raw: string | null | undefined): string | null {
  if (raw === undefined || raw === null) return null;
  // Spawned without a shell, so no quoting issues; still refuse what no device name holds.
  if (raw.length === 0 || raw.length > MAX_DEVICE_LENGTH || /[\u0000-\u001f\u007f]/.test(raw) || raw.startsWith('-')) {
    throw new UsageError(`${flagName(DEVICE_SPEC)} '${raw}' is not a device name; list the capture devices with 'arecord -L' and give one of them`);
  }
  return raw;
}

function resolveStall(raw: RawValue): number {
  const value = raw ?? STALL_SPEC.defaultValue;
  const n = toNumber(value);
  if (!Number.isFinite(n) || n < MIN_STALL_S || n > MAX_STALL_S) {
    throw new UsageError(`${flagName(STALL_SPEC)} must be a number of seconds from ${MIN_STALL_S} to ${MAX_STALL_S} (got '${String(value)}')`);
  }
  return n;
}

function resolveMaxRestarts(raw: RawValue | null): number | null {
  const value = raw ?? MAX_RESTARTS_SPEC.defaultValue;
  if (value === 'never') return null;
  const n = toNumber(value);
  if (!Number.isInteger(n) || n < 0) {
    throw new UsageError(`${flagName(MAX_RESTARTS_SPEC)} must be a whole number of 0 or more, or 'never' (got '${String(value)}')`);
  }
  return n;
}

/** Defaults filled in and every value checked; a bad value is a UsageError naming its flag. */
export function resolveRecorderOptions(input: RecorderOptionsInput = {}): RecorderOptions {
  return {
    recorder: resolveRecorder(input.recorder),
    device: resolveDevice(input.device),
    sampleRate: resolveSampleRate(input.sampleRate),
    channels: resolveChannels(input.channels),
    stallTimeoutS: resolveStall(input.stallTimeoutS),
    maxRestarts: resolveMaxRestarts(input.maxRestarts),
  };
}

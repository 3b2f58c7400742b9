/**
 * The settings of the rotating record log (record-log.ts): the options object, one spec per
 * option (command line, the profile's "log" section, the README's table) and validation.
 */
import { choiceOption, flagOption, numberOption, resolveWithSpecs, sizeOption, textOption, type OptionSpec } from '../options/option-spec.js';
import { formatByteSize } from '../util/byte-size.js';
import { UsageError } from '../util/errors.js';

export type LogFormat = 'jsonl' | 'csv';

export interface RecordLogOptions {
  /** Directory for the log files; null = no logging. */
  logDir: string | null;
  logFormat: LogFormat;
  /** Also log frame records (one per hop), not only events. */
  logFrames: boolean;
  /** Start a new file before one would grow past this many bytes. */
  rotateSize: number;
  /** Seconds between fsyncs of the open files. */
  fsyncEvery: number;
  /** Delete the oldest log files of this station when all of them together pass this many bytes; null = no limit. */
  maxDisk: number | null;
  /** Warn when the free space on the log disk falls below this many bytes. */
  minFree: number;
}

const MIB = 1024 ** 2;

export const recordLogOptionSpecs: readonly OptionSpec<keyof RecordLogOptions>[] = [
  textOption('logDir', 'log-dir', 'dir', null, 'write records to rotating files in this directory', { defaultText: 'off' }),
  choiceOption('logFormat', 'log-format', ['jsonl', 'csv'], 'jsonl', 'log file format'),
  flagOption('logFrames', 'log-frames', false, 'also log one frame record per hop (large files), not only events'),
  sizeOption('rotateSize', 'rotate-size', 64 * MIB, 4096, 'start a new log file at this size (e.g. 64M); files also rotate at each UTC midnight'),
  numberOption('fsyncEvery', 'fsync-every', 's', 5, { min: 0, max: 3600, minExclusive: true, unit: 's' }, 'seconds between forced writes to disk (records written since can be lost on power failure, not on a crash)'),
  sizeOption('maxDisk', 'max-disk', null, 0, "delete this station's oldest log files when all of them pass this size (e.g. 2G)", { defaultText: 'no limit' }),
  sizeOption('minFree', 'min-free', 200 * MIB, 0, 'warn when free space on the log disk falls below this size'),
];

/** Fill in defaults and check the values and their combination. Throws UsageError naming the option. */
export function resolveRecordLogOptions(partial: Partial<RecordLogOptions>): RecordLogOptions {
  const o = resolveWithSpecs<RecordLogOptions>(recordLogOptionSpecs, partial, 'log');
  if (o.maxDisk !== null && o.maxDisk < 2 * o.rotateSize) {
    throw new UsageError(`--max-disk ${formatByteSize(o.maxDisk)} must be at least twice --rotate-size (${formatByteSize(o.rotateSize)}); raise it or lower --rotate-size`);
  }
  return o;
}

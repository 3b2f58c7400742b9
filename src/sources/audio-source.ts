import type { ReplacedSampleCount } from './replaced-samples-report.js';

/**
 * The contract every audio source (WAV file, raw PCM on stdin, live recorder) fulfils.
 * Samples are float in [-1, 1], one Float32Array per channel per block.
 */
export interface AudioFormat {
  readonly sampleRate: number;
  readonly channels: number;
  /** Total frames (samples per channel) when known in advance (a WAV file), else null. */
  readonly totalFrames: number | null;
}

export interface AudioBlock {
  /** One array per channel, all the same length. The arrays may be reused by the next block. */
  readonly channels: readonly Float32Array[];
  /** Number of valid frames in each channel array (may be less than the array length; 0 for a block that only marks a gap). */
  readonly length: number;
  /** Live sources only: where the block sits in live stream time. Absent for files. */
  readonly time?: BlockTime;
}

/**
 * Live stream time (stream-clock.ts): it keeps step with the wall clock, so after audio is lost
 * it jumps by the seconds lost, and the UTC of stream time t is epochMs + 1000 t.
 */
export interface BlockTime {
  /** Stream time (s) of the block's first frame. */
  readonly startS: number;
  /** Wall-clock time (ms since the epoch) of stream time 0. */
  readonly epochMs: number;
  /** Audio lost just before this block (a recorder restart, a dropped backlog). */
  readonly gapBefore?: StreamGap;
}

/** A hole in a live stream, in stream time: from fromS, lostS seconds of audio (0 when not known). */
export interface StreamGap {
  readonly reason: string;
  readonly fromS: number;
  readonly lostS: number;
}

export interface AudioSource {
  readonly format: AudioFormat;
  /**
   * Float samples replaced with 0 so far (NaN, Inf, absurd values: see pcm-decode.ts), for a
   * run's summary. Absent on sources whose encoding cannot hold them (16-bit PCM).
   */
  readonly replacedSamples?: () => ReplacedSampleCount;
  /** Blocks in stream order; ends at end of stream. Warnings (e.g. truncated file) go to onWarning. */
  blocks(): AsyncIterable<AudioBlock>;
  /** Release the underlying file or process. Safe to call more than once. */
  close(): Promise<void>;
}

export type WarningSink = (message: string) => void;

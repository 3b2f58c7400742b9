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
  /** Number of valid frames in each channel array (may be less than the array length). */
  readonly length: number;
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

import type { Readable } from 'node:stream';
import { RuntimeFailure } from '../util/errors.js';
import type { AudioBlock, AudioSource, WarningSink } from './audio-source.js';
import { FrameAssembler } from './frame-assembler.js';
import { checkOptionValue } from '../options/option-spec.js';
import { StreamClock } from './stream-clock.js';
import { CHANNELS_SPEC, checkBlockFrames, RATE_SPEC } from './stream-options.js';
import { stderrWarning } from '../util/stderr-warning.js';
import { pollFd, type PolledInput } from './polled-reader.js';

export interface PcmStreamOptions {
  sampleRate: number;
  channels: number;
  /** Frames per block (default 4096). */
  blockFrames?: number;
  /** Where warnings (a partial last frame) go; default: stderr. */
  onWarning?: WarningSink;
  /** What to call the stream in messages (default 'stdin'). */
  name?: string;
  /**
   * A live stream: blocks carry live stream time (stream-clock.ts), taken to run in real time
   * from the audio that has arrived when the first block is complete. The clock (ms since the
   * epoch, default Date.now) is read then.
   */
  live?: { clock?: () => number };
}


/**
 * Raw interleaved signed 16-bit little-endian PCM from a Readable (e.g. process.stdin), or
 * from a descriptor collected every so often (PolledInput: a live station's stdin).
 * Pull-based: the next chunk is read only when the consumer asks for the next block, so
 * a fast producer is held back by the stream's own back-pressure, and memory stays at
 * one block plus the stream's buffer. Chunks may split samples and frames anywhere.
 * blocks() may be called once.
 */
export function openPcmStreamSource(input: Readable | PolledInput, opts: PcmStreamOptions): AudioSource {
  const sampleRate = checkOptionValue(RATE_SPEC, opts.sampleRate) as number;
  const channels = checkOptionValue(CHANNELS_SPEC, opts.channels) as number;
  const blockFrames = checkBlockFrames(opts.blockFrames);
  const warn = opts.onWarning ?? stderrWarning;
  const name = opts.name ?? 'stdin';
  const assembler = new FrameAssembler('s16', channels, blockFrames);
  let started = false;
  let closed = false;
  let stop: () => void = () => undefined;
  const stopped = new Promise<void>((r) => (stop = r));
  const polled = 'kind' in input && input.kind === 'polled' ? input : null;
  const stream = polled ? null : (input as Readable);
  const chunks: AsyncIterable<unknown> = polled ? pollFd(polled.fd, polled.everyMs, sampleRate * channels * 2, stopped) : stream!;

  const clock = opts.live ? new StreamClock(sampleRate) : null;
  let framesOut = 0;
  /** The assembled block, with its live stream time when the stream is live. */
  const emit = (): AudioBlock => {
    const block = assembler.emit();
    const first = framesOut;
    framesOut += block.length;
    if (!clock) return block;
    if (!clock.started) clock.beginRun(first, (opts.live?.clock ?? Date.now)() - (block.length / sampleRate) * 1000);
    return { channels: block.channels, length: block.length, time: { startS: clock.streamTime(first / sampleRate), epochMs: clock.epochMs } };
  };

  async function* blocks(): AsyncGenerator<AudioBlock> {
    if (started) throw new Error('openPcmStreamSource: blocks() may be called only once');
    started = true;
    try {
      for await (const chunk of chunks) {
        if (closed) break;
        if (!(chunk instanceof Uint8Array)) throw new Error(`openPcmStreamSource: ${name} gives text, not bytes; do not set an encoding on it`);
        let at = 0;
        while (at < chunk.length) {
          at = assembler.take(chunk, at);
          if (assembler.full) yield emit();
        }
      }
    } catch (err) {
      if (err instanceof Error && err.message.startsWith('openPcmStreamSource:')) throw err;
      // close() destroys the stream, which ends a pending read with a premature-close error:
      // that is a stop, not a failure, and the frames already read still go out below.
      if (!closed) throw new RuntimeFailure(`reading ${name} failed: ${(err as Error).message}`);
    }
    const partial = assembler.discardPartialFrame();
    if (partial > 0) warn(`${name} ended inside a frame (${partial} of ${assembler.frameBytes} bytes); the partial frame is dropped`);
    if (assembler.heldFrames > 0) yield emit();
  }

  return {
    format: { sampleRate, channels, totalFrames: null },
    blocks,
    /** Stop reading: blocks() ends after the frames already read (a stop signal's path, not an error). */
    async close() {
      if (closed) return;
      closed = true;
      stop();
      stream?.destroy();
    },
  };
}

import { numberOption, type OptionSpec } from '../options/option-spec.js';
import type { AudioBlock, AudioSource } from './audio-source.js';

/**
 * Replays a source at real-time pace times `speed`: each block is handed on no earlier than
 * the moment its last sample would have been captured live. For showing a recording in the
 * live viewer (`scan FILE --serve`). An I/O edge (it waits on timers); the clock and the
 * sleep are injectable for tests.
 */

export const paceOptionSpecs: readonly OptionSpec<'speed'>[] = [
  numberOption('speed', 'speed', 'x', 1, { min: 0.01, max: 1000 }, 'with --serve: replay at this many times real time (1 = real time, 2 = twice as fast)'),
];

export interface PaceClock {
  /** Milliseconds, monotonic. */
  now(): number;
  sleep(ms: number): Promise<void>;
}

const realClock: PaceClock = {
  now: () => performance.now(),
  sleep: (ms) => new Promise((resolve) => setTimeout(resolve, ms)),
};

export function pacedSource(inner: AudioSource, speed: number, clock: PaceClock = realClock): AudioSource {
  const framesPerMs = (inner.format.sampleRate * speed) / 1000;
  async function* blocks(): AsyncGenerator<AudioBlock> {
    let t0: number | null = null;
    let frames = 0;
    for await (const block of inner.blocks()) {
      t0 ??= clock.now();
      frames += block.length;
      const wait = t0 + frames / framesPerMs - clock.now();
      if (wait > 0) await clock.sleep(wait);
      yield block;
    }
  }
  return { format: inner.format, blocks, close: () => inner.close() };
}

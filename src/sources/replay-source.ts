/**
 * Wrappers around an AudioSource for the commands that replay recordings: a tap that sees
 * every block on its way to the analysis, a pace that holds blocks back to real time, and a
 * stop that ends the stream early (Ctrl-C). I/O edge: the pace reads the clock.
 */
import { setTimeout as sleep } from 'node:timers/promises';
import type { AudioBlock, AudioSource } from './audio-source.js';

export interface ReplayControls {
  /** Called with every block before the analysis sees it. */
  onBlock?: (block: AudioBlock) => void;
  /** Deliver blocks no faster than real time (stream time = wall-clock time since the first block). */
  realTime?: boolean;
  /** Checked before every block: true ends the stream there. */
  stopped?: () => boolean;
}

export function replaySource(source: AudioSource, controls: ReplayControls): AudioSource {
  const rate = source.format.sampleRate;
  return {
    format: source.format,
    close: () => source.close(),
    async *blocks(): AsyncIterable<AudioBlock> {
      let started = -1;
      let done = 0;
      for await (const block of source.blocks()) {
        if (controls.stopped?.()) return;
        if (controls.realTime) {
          const now = performance.now();
          if (started < 0) started = now;
          const ahead = started + (done / rate) * 1000 - now;
          if (ahead > 1) await sleep(ahead);
          if (controls.stopped?.()) return;
        }
        controls.onBlock?.(block);
        done += block.length;
        yield block;
      }
    },
  };
}

/**
 * Live stream time from the source's blocks (issue 15: listen used to poll the recorder for
 * its run and patch each hop's time by mutation). The driver gives every hop the time of the
 * block that completed its frame, and tells each hole before the hops after it.
 * The signal: independent noise from sox (an independent tool) on a 0.2 m pair.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createAnalysis, runAnalysis } from '../../src/analysis/analysis.js';
import { pairGeometry } from '../../src/geometry/array-geometry.js';
import type { AudioBlock, AudioSource, BlockTime } from '../../src/sources/audio-source.js';
import { soxDecode, soxDelayedSignal } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

const tmp = tempDir();
afterAll(() => tmp.cleanup());
let audio: { rate: number; channels: Float32Array[] };
beforeAll(() => {
  audio = soxDecode(soxDelayedSignal({ out: `${tmp.dir}/pair.wav`, delaysUp: [0, 40], durationS: 1, bits: 16 }, tmp.dir));
});

/** The audio in blocks of 4800 frames (0.1 s), with `time` per block as given. */
function source(times: (i: number, startFrames: number) => BlockTime | undefined): AudioSource {
  const n = 4800;
  return {
    format: { sampleRate: audio.rate, channels: 2, totalFrames: null },
    async *blocks(): AsyncGenerator<AudioBlock> {
      for (let i = 0, at = 0; at < audio.channels[0]!.length; i++, at += n) {
        const length = Math.min(n, audio.channels[0]!.length - at);
        yield { channels: audio.channels.map((c) => c.subarray(at, at + length)), length, time: times(i, at) };
      }
    },
    close: async () => undefined,
  };
}

async function run(src: AudioSource): Promise<{ hops: { analyzerS: number; streamS: number; epochMs: number | null }[]; events: string[] }> {
  const setup = createAnalysis(pairGeometry(0.2), audio.rate, 343, {});
  const hops: { analyzerS: number; streamS: number; epochMs: number | null }[] = [];
  const events: string[] = [];
  await runAnalysis(src, setup.analyzer, {
    onHop: (r, time) => {
      hops.push({ analyzerS: r.timeS, streamS: time.timeS, epochMs: time.epochMs });
      events.push('hop');
    },
    onGap: (gap, epochMs) => void events.push(`gap ${gap.reason} from ${gap.fromS} s, ${gap.lostS} s lost, epoch ${epochMs}`),
  });
  return { hops, events };
}

describe('stream time carried by the blocks', () => {
  it('a file (no block time): hops at the analyzer\'s time, no UTC', async () => {
    const { hops } = await run(source(() => undefined));
    expect(hops.length).toBeGreaterThan(80);
    for (const h of hops) {
      expect(h.streamS).toBe(h.analyzerS);
      expect(h.epochMs).toBeNull();
    }
  });

  it('a live stream that lost 2.5 s after its fifth block: later hops jump by 2.5 s, and the gap is told before them', async () => {
    const epoch = Date.UTC(2025, 5, 14, 21, 30, 0);
    const { hops, events } = await run(
      source((i, at) => ({
        startS: at / audio.rate + (i >= 5 ? 2.5 : 0),
        epochMs: epoch,
        ...(i === 5 ? { gapBefore: { reason: 'arecord exited with code 1', fromS: 0.5, lostS: 2.5 } } : {}),
      })),
    );
    for (const h of hops) {
      expect(h.epochMs).toBe(epoch);
      // a hop takes the time of the block that completed its frame (its last sample)
      const lastSample = h.analyzerS + 1024 / 2 / audio.rate;
      expect(h.streamS).toBeCloseTo(h.analyzerS + (lastSample > 0.5 ? 2.5 : 0), 9);
    }
    const gapAt = events.indexOf(`gap arecord exited with code 1 from 0.5 s, 2.5 s lost, epoch ${epoch}`);
    expect(gapAt).toBeGreaterThan(0);
    expect(events.filter((e) => e.startsWith('gap'))).toHaveLength(1);
    // every hop told before the gap ends before the hole; every hop after it, after (its frame ends after the hole)
    const before = hops.slice(0, gapAt);
    const half = 1024 / 2 / audio.rate;
    expect(before.length).toBeGreaterThan(5);
    expect(before.every((h) => h.streamS + half <= 0.5)).toBe(true);
    expect(hops.slice(gapAt).every((h) => h.streamS + half > 3)).toBe(true);
  });
});

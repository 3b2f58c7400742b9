import { describe, expect, it } from 'vitest';
import type { AudioBlock, AudioSource } from '../../src/sources/audio-source.js';
import { parseOptionText } from '../../src/options/option-spec.js';
import { pacedSource, paceOptionSpecs } from '../../src/sources/paced-source.js';
import { StreamClock } from '../../src/sources/stream-clock.js';

describe('StreamClock: live stream time keeps step with the wall clock', () => {
  it('first run sets the origin; a hole is added to stream time; utc = origin + time_s', () => {
    const c = new StreamClock(1000);
    const t0 = Date.UTC(2025, 5, 14, 21, 30, 0);
    expect(c.beginRun(0, t0)).toBe(0);
    expect(c.streamTime(2.5)).toBe(2.5);
    expect(c.utcAt(2.5)).toBe('2025-06-14T21:30:02.500Z');
    // 3000 frames (3 s) delivered, then the next run's first sample was captured at t0 + 4.2 s: 1.2 s lost.
    expect(c.beginRun(3000, t0 + 4200)).toBeCloseTo(1.2, 9);
    expect(c.streamTime(3)).toBeCloseTo(4.2, 9);
    expect(c.lostS).toBeCloseTo(1.2, 9);
    // A recorder that delivered faster than real time: no time lost, none taken back.
    expect(c.beginRun(10_000, t0 + 5000)).toBe(0);
    expect(c.streamTime(10)).toBeCloseTo(11.2, 9);
  });
});

function fakeSource(rate: number, blocks: number[]): AudioSource {
  return {
    format: { sampleRate: rate, channels: 1, totalFrames: null },
    async *blocks(): AsyncGenerator<AudioBlock> {
      for (const n of blocks) yield { channels: [new Float32Array(n)], length: n };
    },
    close: async () => undefined,
  };
}

describe('pacedSource: a block is handed on when its last sample would have been captured, times speed', () => {
  it('waits frames / (rate x speed) from the first block on a fake clock', async () => {
    let now = 1000;
    const handed: number[] = [];
    const clock = { now: () => now, sleep: async (ms: number) => void (now += ms) };
    const src = pacedSource(fakeSource(1000, [500, 500, 1000]), 2, clock);
    for await (const b of src.blocks()) {
      expect(b.length).toBeGreaterThan(0);
      handed.push(now - 1000);
    }
    // 500 frames at 1000 Hz x 2 = 250 ms, then 500 ms, then 1000 ms.
    expect(handed).toEqual([250, 500, 1000]);
  });
  it('--speed is checked', () => {
    const speed = paceOptionSpecs[0]!;
    expect(parseOptionText(speed, '20')).toBe(20);
    expect(() => parseOptionText(speed, '0')).toThrow(/--speed: 0 is out of range; give a number from 0\.01 to 1000/);
    expect(() => parseOptionText(speed, 'fast')).toThrow(/--speed: 'fast' is not a number/);
  });
});

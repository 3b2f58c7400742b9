import { describe, expect, it } from 'vitest';
import { Framer } from '../../src/dsp/framer.js';

/**
 * Framing (common practice, no source): frame h of a stream holds samples h * hop .. h * hop +
 * frame - 1 of every channel, whatever blocks the stream arrives in. Checked against slices of
 * the input, with the framer's own buffers and with buffers given to it (the analyzer's, which
 * the framer fills in place: HopAnalyzer.inputFrames).
 */
function stream(channels: number, length: number): Float32Array[] {
  return Array.from({ length: channels }, (_, c) => Float32Array.from({ length }, (_, i) => c * 100000 + i));
}

function frames(framer: Framer, input: Float32Array[], blocks: number[]): { first: number[]; same: boolean }[] {
  const out: { first: number[]; same: boolean }[] = [];
  let pos = 0;
  let b = 0;
  let seen: readonly Float64Array[] | null = null;
  while (pos < input[0]!.length) {
    const len = Math.min(blocks[b++ % blocks.length]!, input[0]!.length - pos);
    framer.push(input.map((x) => x.subarray(pos, pos + len)), len, (f) => {
      out.push({ first: f.map((x) => x[0]!), same: seen === null || f.every((x, c) => x === seen![c]) });
      for (let c = 0; c < f.length; c++) {
        const at = f[c]![0]! - c * 100000;
        for (let i = 0; i < f[c]!.length; i++) if (f[c]![i] !== input[c]![at + i]) throw new Error(`frame sample ${i} of channel ${c} is not the input's`);
      }
      seen = f;
    });
    pos += len;
  }
  return out;
}

describe('the framer cuts frames of `frame` samples every `hop` samples', () => {
  it.each([
    [16, 8],
    [16, 16],
    [16, 24],
  ])('frame %i, hop %i, in odd blocks, into its own buffers or given ones', (frame, hop) => {
    const input = stream(3, 200);
    const expected = Math.floor((200 - frame) / hop) + 1;
    for (const given of [null, Array.from({ length: 3 }, () => new Float64Array(frame))]) {
      const out = frames(new Framer(3, frame, hop, given), input, [1, 7, 33, 5]);
      expect(out.length).toBe(expected);
      out.forEach((f, h) => expect(f.first).toEqual([h * hop, 100000 + h * hop, 200000 + h * hop]));
      // The same buffers every hop: the given ones when given.
      expect(out.every((f) => f.same)).toBe(true);
    }
    const given = Array.from({ length: 3 }, () => new Float64Array(frame));
    new Framer(3, frame, hop, given).push(input, 200, (f) => expect(f.every((x, c) => x === given[c])).toBe(true));
  });

  it('refuses buffers of the wrong count or length', () => {
    expect(() => new Framer(2, 16, 8, [new Float64Array(16)])).toThrow(/2 buffers of 16 samples/);
    expect(() => new Framer(2, 16, 8, [new Float64Array(16), new Float64Array(8)])).toThrow(/2 buffers of 16 samples/);
  });
});

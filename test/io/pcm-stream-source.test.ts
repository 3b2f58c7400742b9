import { spawn } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { Readable } from 'node:stream';
import { afterAll, describe, expect, it } from 'vitest';
import { UsageError } from '../../src/util/errors.js';
import { openPcmStreamSource } from '../../src/sources/pcm-stream-source.js';
import { drain, maxAbsDiff } from '../helpers/audio.js';
import { realSox, sox, soxDecodeInterleaved, synthSpecs } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

const tmp = tempDir('pcm');
afterAll(() => tmp.cleanup());

/** Raw s16le written by sox (-R: the same noise on every run), and sox's own float decoding of it. */
function soxRaw(channels: number, rate: number, seconds: number): { raw: Buffer; ref: Float32Array } {
  const file = join(tmp.dir, `r${channels}-${rate}.raw`);
  sox(['-R', '-n', '-r', String(rate), '-c', String(channels), '-e', 'signed-integer', '-b', '16', '-L', '-t', 'raw', file, 'synth', String(seconds), ...synthSpecs(channels), 'vol', '0.8']);
  const ref = soxDecodeInterleaved(file, ['-t', 'raw', '-r', String(rate), '-c', String(channels), '-e', 'signed-integer', '-b', '16', '-L']);
  return { raw: readFileSync(file), ref };
}

/** Split a buffer into chunks of the given sizes, cycling (odd sizes split samples and frames). */
function splitOdd(buf: Buffer, sizes: number[]): Buffer[] {
  const out: Buffer[] = [];
  for (let at = 0, k = 0; at < buf.length; k++) {
    const n = sizes[k % sizes.length]!;
    out.push(buf.subarray(at, at + n));
    at += n;
  }
  return out;
}

const HALF_STEP = 2 ** -16; // half a 16-bit quantisation step

describe('raw s16le stream source against sox decoding', () => {
  it.each([1, 3, 8])('%d channels fed in odd-sized chunks (1, 3, 7, 1001, 2 bytes) decode like sox', async (channels) => {
    const { raw, ref } = soxRaw(channels, 16000, 0.31);
    const warnings: string[] = [];
    const src = openPcmStreamSource(Readable.from(splitOdd(raw, [1, 3, 7, 1001, 2])), { sampleRate: 16000, channels, blockFrames: 500, onWarning: (m) => warnings.push(m) });
    expect(src.format).toEqual({ sampleRate: 16000, channels, totalFrames: null });
    const { samples, blockLengths } = await drain(src);
    expect(maxAbsDiff(samples, ref)).toBeLessThanOrEqual(HALF_STEP);
    const frames = ref.length / channels;
    expect(blockLengths).toEqual([...Array<number>(Math.floor(frames / 500)).fill(500), ...(frames % 500 ? [frames % 500] : [])]);
    expect(warnings).toEqual([]);
  });

  it('reads the stdout of a sox process (a real pipe)', async () => {
    const { ref } = soxRaw(4, 48000, 0.5);
    const child = spawn(realSox(), ['-R', '-n', '-r', '48000', '-c', '4', '-e', 'signed-integer', '-b', '16', '-L', '-t', 'raw', '-', 'synth', '0.5', ...synthSpecs(4), 'vol', '0.8']);
    const src = openPcmStreamSource(child.stdout, { sampleRate: 48000, channels: 4 });
    const { samples } = await drain(src);
    expect(maxAbsDiff(samples, ref)).toBeLessThanOrEqual(HALF_STEP);
  });

  it('warns about and drops a trailing partial frame', async () => {
    const { raw, ref } = soxRaw(2, 8000, 0.1);
    const warnings: string[] = [];
    const src = openPcmStreamSource(Readable.from(splitOdd(Buffer.concat([raw, Buffer.from([1, 2, 3])]), [999])), { sampleRate: 8000, channels: 2, onWarning: (m) => warnings.push(m), name: 'the pond feed' });
    const { samples } = await drain(src);
    expect(maxAbsDiff(samples, ref)).toBeLessThanOrEqual(HALF_STEP);
    expect(warnings).toEqual(['the pond feed ended inside a frame (3 of 4 bytes); the partial frame is dropped']);
  });

  it('pulls: a fast producer is held back while the consumer is slow (back-pressure)', async () => {
    const { raw } = soxRaw(2, 8000, 8);
    let produced = 0;
    const chunkBytes = 1000;
    const highWaterMark = 4096;
    const stream = new Readable({
      highWaterMark,
      read() {
        if (produced >= raw.length) return void this.push(null);
        this.push(raw.subarray(produced, produced + chunkBytes));
        produced += chunkBytes;
      },
    });
    const blockFrames = 256;
    const src = openPcmStreamSource(stream, { sampleRate: 8000, channels: 2, blockFrames });
    let consumed = 0;
    let maxAhead = 0;
    for await (const b of src.blocks()) {
      consumed += b.length * 4;
      maxAhead = Math.max(maxAhead, produced - consumed);
      await new Promise((r) => setTimeout(r, 1)); // a slow consumer
    }
    expect(consumed).toBe(raw.length);
    // The iterator takes what the stream holds (up to its buffer plus one chunk) and the stream
    // refills once more while that is cut into blocks: at most twice that, plus one block.
    // Buffering without back-pressure would run ahead by most of the 256000 bytes.
    expect(maxAhead).toBeLessThanOrEqual(2 * (highWaterMark + chunkBytes) + blockFrames * 4);
  });

  it('a stream error becomes a RuntimeFailure naming the stream', async () => {
    const stream = new Readable({ read() { this.destroy(new Error('EIO: input/output error')); } });
    const src = openPcmStreamSource(stream, { sampleRate: 8000, channels: 1 });
    await expect(drain(src)).rejects.toThrow(/^reading stdin failed: EIO: input\/output error$/);
  });
});

describe('a live stream (listen --stdin): blocks carry live stream time', () => {
  it('stream time runs on with the frames from the first block, which is taken to end when it arrives', async () => {
    const { raw } = soxRaw(2, 8000, 0.5);
    const arrived = Date.UTC(2025, 5, 14, 21, 30, 0);
    const src = openPcmStreamSource(Readable.from(splitOdd(raw, [999, 4001])), { sampleRate: 8000, channels: 2, blockFrames: 800, live: { clock: () => arrived } });
    const times: { startS: number; epochMs: number }[] = [];
    for await (const b of src.blocks()) times.push({ startS: b.time!.startS, epochMs: b.time!.epochMs });
    expect(times.map((t) => t.startS)).toEqual([0, 0.1, 0.2, 0.3, 0.4]);
    // the first block (800 frames, 100 ms) ended when it arrived: stream time 0 is 100 ms before
    for (const t of times) expect(t.epochMs).toBe(arrived - 100);
  });

  it('a file-like stream (scan --stdin) has no stream time', async () => {
    const { raw } = soxRaw(2, 8000, 0.5);
    const src = openPcmStreamSource(Readable.from([raw]), { sampleRate: 8000, channels: 2, blockFrames: 800 });
    for await (const b of src.blocks()) expect(b.time).toBeUndefined();
  });
});

describe('stream options: UsageError naming the option', () => {
  const empty = (): Readable => Readable.from([]);
  it.each([
    [{ sampleRate: 999, channels: 2 }, /^--rate: 999 is out of range; give a whole number from 1000 to 768000 Hz\.$/],
    [{ sampleRate: 768001, channels: 2 }, /^--rate: 768001 is out of range; give a whole number from 1000 to 768000 Hz/],
    [{ sampleRate: 44100.5, channels: 2 }, /^--rate: 44100.5 is out of range; give a whole number/],
    [{ sampleRate: Number.NaN, channels: 2 }, /^--rate: NaN is out of range/],
    [{ sampleRate: 48000, channels: 0 }, /^--channels: 0 is out of range; give a whole number from 1 to 8\.$/],
    [{ sampleRate: 48000, channels: 9 }, /^--channels: 9 is out of range; give a whole number from 1 to 8\.$/],
  ])('%o', (opts, message) => {
    expect(() => openPcmStreamSource(empty(), opts)).toThrow(UsageError);
    expect(() => openPcmStreamSource(empty(), opts)).toThrow(message);
  });

  it('accepts the limits 1000 and 768000 Hz, 1 and 8 channels', () => {
    expect(openPcmStreamSource(empty(), { sampleRate: 1000, channels: 1 }).format.sampleRate).toBe(1000);
    expect(openPcmStreamSource(empty(), { sampleRate: 768000, channels: 8 }).format.channels).toBe(8);
  });
});

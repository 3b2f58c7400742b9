import { chmodSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { RuntimeFailure, UsageError } from '../../src/util/errors.js';
import type { AudioBlock, BlockTime, StreamGap } from '../../src/sources/audio-source.js';
import { defaultText, parseOptionText, usageOf } from '../../src/options/option-spec.js';
import { RECORDER_OPTION_SPECS, resolveRecorderOptions, type RecorderOptions } from '../../src/sources/recorder-options.js';
import { openRecorderSource, type RecorderSource } from '../../src/sources/recorder-source.js';
import { RestartPolicy } from '../../src/sources/restart-policy.js';
import { maxAbsDiff } from '../helpers/audio.js';
import { sox, soxDecodeInterleaved, synthSpecs } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

/**
 * The live recorder is replaced by stand-in executables named sox / rec / arecord, placed
 * first on PATH. They stream raw s16le that sox generated (sox is the independent source
 * of the samples); node-record-lpcm16 spawns them exactly as it would spawn the real ones.
 */
const tmp = tempDir('rec');
const bin = join(tmp.dir, 'bin');
mkdirSync(bin);
const savedPath = process.env.PATH;
beforeAll(() => {
  process.env.PATH = `${bin}:${savedPath}`;
});
afterAll(() => {
  process.env.PATH = savedPath;
  tmp.cleanup();
});
let open: RecorderSource | null = null;
afterEach(async () => {
  await open?.close();
  open = null;
});

function soxRaw(name: string, channels: number, rate: number, seconds: number): { file: string; ref: Float32Array } {
  const file = join(tmp.dir, name);
  const fmt = ['-r', String(rate), '-c', String(channels), '-e', 'signed-integer', '-b', '16', '-L', '-t', 'raw'];
  sox(['-R', '-n', ...fmt, file, 'synth', String(seconds), ...synthSpecs(channels), 'vol', '0.8']);
  return { file, ref: soxDecodeInterleaved(file, fmt) };
}

/** Write a stand-in recorder script; it records its arguments and AUDIODEV next to itself. */
function standIn(name: 'sox' | 'rec' | 'arecord', body: string): void {
  const path = join(bin, name);
  writeFileSync(path, `#!/bin/sh\nPATH=/usr/bin:/bin\nprintf '%s\\n' "$@" > "${bin}/${name}.args"\nprintf '%s' "\${AUDIODEV-}" > "${bin}/${name}.audiodev"\n${body}\n`);
  chmodSync(path, 0o755);
}
const argsOf = (name: string): string[] => readFileSync(join(bin, `${name}.args`), 'utf8').trim().split('\n');

/** A hole as the blocks mark it: at which frame of the stream (frames delivered before the block). */
interface MarkedGap extends StreamGap {
  atFrame: number;
}

/** Collect interleaved samples until `frames` frames have arrived (and each block's time). */
async function take(src: RecorderSource, frames: number, times: BlockTime[] = []): Promise<Float32Array> {
  const C = src.format.channels;
  const out = new Float32Array(frames * C);
  let n = 0;
  for await (const b of src.blocks()) {
    if (b.time) times.push(b.time);
    for (let i = 0; i < b.length && n < frames; i++, n++) for (let c = 0; c < C; c++) out[n * C + c] = b.channels[c]![i]!;
    if (n >= frames) break;
  }
  return out;
}

async function start(input: Partial<RecorderOptions>, timing = {}, warnings: string[] = []): Promise<RecorderSource> {
  open = await openRecorderSource(resolveRecorderOptions({ channels: 2, ...input }), { blockFrames: 800, onWarning: (m) => warnings.push(m), timing });
  return open;
}

const HALF_STEP = 2 ** -16;

describe('recorder source with stand-in recorders on PATH', () => {
  it('sox: streams 4 channels as sox decodes them; the package asked for raw s16 at our rate and channel count', async () => {
    const { file, ref } = soxRaw('a.raw', 4, 16000, 0.5);
    standIn('sox', `exec cat "${file}"`);
    const before = Date.now();
    const src = await start({ recorder: 'sox', sampleRate: 16000, channels: 4 });
    const times: BlockTime[] = [];
    const got = await take(src, 8000, times);
    expect(maxAbsDiff(got, ref)).toBeLessThanOrEqual(HALF_STEP);
    // Every block carries live stream time: it starts at 0 when the first sample was captured,
    // and runs on with the frames (800 per block at 16 kHz: 50 ms) while nothing is lost.
    expect(times.length).toBe(10);
    expect(times[0]!.epochMs).toBeGreaterThanOrEqual(before - 1000);
    expect(times[0]!.epochMs).toBeLessThanOrEqual(Date.now());
    times.forEach((t, i) => {
      expect(t.startS).toBeCloseTo(i * 0.05, 9);
      expect(t.epochMs).toBe(times[0]!.epochMs);
      expect(t.gapBefore).toBeUndefined();
    });
    const args = argsOf('sox').join(' ');
    for (const a of ['--rate 16000', '--channels 4', '--encoding signed-integer', '--bits 16', '--type raw']) expect(args).toContain(a);
  });

  it('arecord: the device goes to -D, the format is S16_LE raw', async () => {
    const { file, ref } = soxRaw('b.raw', 2, 8000, 0.3);
    standIn('arecord', `exec cat "${file}"`);
    const src = await start({ recorder: 'arecord', device: 'hw:1,0', sampleRate: 8000, channels: 2 });
    expect(maxAbsDiff(await take(src, 2400), ref)).toBeLessThanOrEqual(HALF_STEP);
    expect(argsOf('arecord')).toEqual(['-D', 'hw:1,0', '-q', '-r', '8000', '-c', '2', '-t', 'raw', '-f', 'S16_LE', '-']);
  });

  it('rec: the device reaches it as AUDIODEV (the package ignores it for rec; bearline sets it)', async () => {
    const { file } = soxRaw('c.raw', 1, 8000, 0.2);
    standIn('rec', `exec cat "${file}"`);
    const src = await start({ recorder: 'rec', device: 'plughw:2', sampleRate: 8000, channels: 1 });
    await take(src, 800);
    expect(readFileSync(join(bin, 'rec.audiodev'), 'utf8')).toBe('plughw:2');
    expect(process.env.AUDIODEV).toBeUndefined();
  });

  it('a recorder that exits after a second is restarted (0.5 s, then 1 s), each gap reported, then gives up', async () => {
    const { file, ref } = soxRaw('d.raw', 1, 16000, 0.5);
    standIn('sox', `head -c 16000 "${file}"\necho "sox FAIL sox: the capture device went away" >&2\nsleep 1 >/dev/null\nexit 3`);
    const gaps: MarkedGap[] = [];
    const warnings: string[] = [];
    const src = await start({ recorder: 'sox', sampleRate: 16000, channels: 1, maxRestarts: 2 }, {}, warnings);
    const blocks: number[] = [];
    const heard: Float32Array[] = [];
    let frames = 0;
    let lastStart = 0;
    const err = await (async () => {
      for await (const b of src.blocks()) {
        if (b.time?.gapBefore) gaps.push({ ...b.time.gapBefore, atFrame: frames });
        lastStart = b.time!.startS;
        frames += b.length;
        blocks.push(b.length);
        heard.push(Float32Array.from(b.channels[0]!.subarray(0, b.length)));
      }
    })().then(() => null, (e: unknown) => e);
    expect(err).toBeInstanceOf(RuntimeFailure);
    expect((err as Error).message).toMatch(/^the recorder sox failed 3 times in a row \(last: sox exited with code 3 \(sox FAIL sox: the capture device went away\)\); giving up/);
    // Each hole is marked on the first block after it: where the stream stopped (stream time)
    // and the audio lost until the next run's first sample (at least the 0.5 s and 1 s of
    // back-off; loose bounds, a sanity check only).
    const reason = 'sox exited with code 3 (sox FAIL sox: the capture device went away)';
    expect(gaps.map((g) => [g.atFrame, g.reason])).toEqual([
      [8000, reason],
      [16000, reason],
    ]);
    expect(gaps[0]!.fromS).toBeCloseTo(0.5, 9);
    expect(gaps[0]!.lostS).toBeGreaterThan(0.4);
    expect(gaps[1]!.fromS).toBeCloseTo(1 + gaps[0]!.lostS, 9);
    expect(gaps[1]!.lostS).toBeGreaterThan(0.9);
    expect(gaps[1]!.lostS).toBeLessThan(10);
    // Stream time keeps step with the wall clock: the last run's blocks sit after both holes.
    expect(lastStart).toBeGreaterThanOrEqual(1 + gaps[0]!.lostS + gaps[1]!.lostS);
    expect(src.restarts).toBe(2);
    expect(warnings.map((w) => w.replace(/^.*; /, ''))).toEqual(['restarting sox in 0.5 s', 'restarting sox in 1 s']);
    expect(blocks.reduce((a, b) => a + b, 0)).toBe(24000); // three runs of 8000 frames each
    const all = new Float32Array(24000);
    heard.reduce((o, h) => (all.set(h, o), o + h.length), 0);
    for (let run = 0; run < 3; run++) expect(maxAbsDiff(all.subarray(run * 8000, run * 8000 + 8000), ref.subarray(0, 8000))).toBeLessThanOrEqual(HALF_STEP);
  });

  it('a recorder that hangs is stopped by the stall detector and restarted; after max restarts it ends with a RuntimeFailure', async () => {
    const { file } = soxRaw('e.raw', 2, 8000, 0.5);
    standIn('arecord', `head -c 6400 "${file}"\nexec sleep 30`);
    const gaps: MarkedGap[] = [];
    const src = await start({ recorder: 'arecord', sampleRate: 8000, channels: 2, stallTimeoutS: 1, maxRestarts: 1 });
    const t0 = Date.now();
    let frames = 0;
    const err = await (async () => {
      for await (const b of src.blocks()) {
        if (b.time?.gapBefore) gaps.push({ ...b.time.gapBefore, atFrame: frames });
        frames += b.length;
      }
    })().then(() => null, (e: unknown) => e);
    expect(err).toBeInstanceOf(RuntimeFailure);
    expect((err as Error).message).toMatch(/failed 2 times in a row \(last: no audio from arecord for 1 s\)/);
    expect(gaps.map((g) => [g.atFrame, g.reason])).toEqual([[1600, 'no audio from arecord for 1 s']]);
    expect(frames).toBe(3200);
    // Loose sanity bound only (two stalls of 1 s and one back-off of 0.5 s), not a timing target.
    expect(Date.now() - t0).toBeGreaterThanOrEqual(2400);
  });

  it('the analysis falling behind drops queued audio as a gap; what follows is contiguous and frame-aligned', async () => {
    const { file, ref } = soxRaw('f.raw', 3, 8000, 12);
    standIn('sox', `exec cat "${file}"\n`);
    const gaps: MarkedGap[] = [];
    const src = await start({ recorder: 'sox', sampleRate: 8000, channels: 3 }, { maxQueueS: 1 });
    const got: number[][] = [[], [], []];
    let first = true;
    for await (const b of src.blocks()) {
      if (b.time?.gapBefore) gaps.push({ ...b.time.gapBefore, atFrame: got[0]!.length });
      for (let c = 0; c < 3; c++) for (let i = 0; i < b.length; i++) got[c]!.push(b.channels[c]![i]!);
      if (first) await new Promise((r) => setTimeout(r, 700)); // slow analysis: the recorder's output piles up
      first = false;
      if (gaps.length > 0 && got[0]!.length > gaps[0]!.atFrame + 4000) break;
    }
    expect(gaps.length).toBeGreaterThanOrEqual(1);
    expect(gaps[0]!.reason).toMatch(/^the analysis fell behind the live audio; dropped \d+\.\d s$/);
    // The dropped audio counts as lost: stream time jumps by it (it used to be marked as a gap of 0 s).
    expect(gaps[0]!.lostS).toBeCloseTo(Number(/dropped (\d+\.\d) s/.exec(gaps[0]!.reason)![1]), 1);
    expect(gaps[0]!.lostS).toBeGreaterThan(0.5);
    // Find where the audio after the gap sits in sox's signal (whitenoise on channel 1 makes it unique), then compare all channels.
    const at = gaps[0]!.atFrame;
    const frameAt = (k: number): number[] => [0, 1, 2].map((c) => ref[k * 3 + c]!);
    let offset = -1;
    for (let k = at; k < ref.length / 3 && offset < 0; k++) {
      if ([0, 1, 2, 3].every((j) => frameAt(k + j).every((v, c) => Math.abs(v - got[c]![at + j]!) <= HALF_STEP))) offset = k;
    }
    expect(offset).toBeGreaterThan(at);
    // Contiguous up to the next drop: on a loaded machine the queue may overflow a second time
    // before 4000 frames have been read (a later drop is marked as its own gap).
    const span = Math.min(4000, (gaps[1]?.atFrame ?? Infinity) - at);
    expect(span).toBeGreaterThanOrEqual(1000);
    let worst = 0;
    for (let j = 0; j < span; j++) for (let c = 0; c < 3; c++) worst = Math.max(worst, Math.abs(got[c]![at + j]! - ref[(offset + j) * 3 + c]!));
    expect(worst).toBeLessThanOrEqual(HALF_STEP);
  });

  it('a recorder that is not installed is a UsageError saying what to install', async () => {
    const savedPath2 = process.env.PATH;
    process.env.PATH = join(tmp.dir, 'empty');
    try {
      const err = await openRecorderSource(resolveRecorderOptions({ recorder: 'arecord', channels: 2 })).then(() => null, (e: unknown) => e);
      expect(err).toBeInstanceOf(UsageError);
      expect((err as Error).message).toBe("the recorder 'arecord' was not found on PATH; install it (apt-get install alsa-utils) or choose another with --recorder (sox, rec, arecord)");
    } finally {
      process.env.PATH = savedPath2;
    }
  });

  it('close() stops the recorder and ends the blocks', async () => {
    standIn('sox', 'exec sleep 30');
    const src = await start({ recorder: 'sox', stallTimeoutS: 60 });
    const ended = (async () => {
      const seen: AudioBlock[] = [];
      for await (const b of src.blocks()) seen.push(b);
      return seen.length;
    })();
    await new Promise((r) => setTimeout(r, 200));
    await src.close();
    expect(await ended).toBe(0);
  });
});

describe('recorder options (one home: specs, defaults, validation)', () => {
  it('fills the defaults; the channel count is the caller\'s (the number of mics)', () => {
    expect(resolveRecorderOptions({ channels: 2 })).toEqual({ recorder: 'sox', device: null, sampleRate: 48000, channels: 2, stallTimeoutS: 2, maxRestarts: null });
    expect(resolveRecorderOptions({ sampleRate: 16000, channels: 4, stallTimeoutS: 0.5, maxRestarts: 3 })).toMatchObject({ sampleRate: 16000, channels: 4, stallTimeoutS: 0.5, maxRestarts: 3 });
    expect(parseOptionText(RECORDER_OPTION_SPECS.find((s) => s.key === 'maxRestarts')!, 'never')).toBeNull();
  });

  it('lists every option with its flag, help and default', () => {
    expect(RECORDER_OPTION_SPECS.map((s) => [s.key, usageOf(s), defaultText(s)])).toEqual([
      ['recorder', '--recorder <sox|rec|arecord>', 'sox'],
      ['device', '--device <name>', "the recorder's default input"],
      ['sampleRate', '--rate <hz>', '48000'],
      ['channels', '--channels <n>', 'the number of mics'],
      ['stallTimeoutS', '--stall-timeout <s>', '2'],
      ['maxRestarts', '--max-restarts <n>', 'never'],
    ]);
    for (const s of RECORDER_OPTION_SPECS) expect(s.help.length).toBeGreaterThan(10);
  });

  it.each([
    [{ recorder: 'ffmpeg' }, "--recorder: 'ffmpeg' is not known; give one of sox, rec, arecord."],
    [{ recorder: '/usr/bin/sox' }, /--recorder: '\/usr\/bin\/sox' is not known; give one of sox, rec, arecord/],
    [{ recorder: '../recorders/sox' }, /--recorder: .* is not known/],
    [{ device: '' }, /--device: '' is empty/],
    [{ device: '-x' }, /--device: '-x' is not a device name/],
    [{ sampleRate: 500 }, /--rate: 500 is out of range; give a whole number from 1000 to 768000 Hz/],
    [{ channels: 9 }, /--channels: 9 is out of range; give a whole number from 1 to 8/],
    [{ stallTimeoutS: 0 }, /--stall-timeout: 0 is out of range; give a number from 0.1 to 600 s/],
    [{ stallTimeoutS: 'soon' }, /--stall-timeout: 'soon' is not a number/],
    [{ maxRestarts: -1 }, /--max-restarts: -1 is out of range; give a whole number from 0 .*, or 'never'/],
    [{ maxRestarts: 2.5 }, /--max-restarts: 2.5 is out of range/],
  ] as [Record<string, unknown>, string | RegExp][])('%o is a UsageError', (input, message) => {
    const given = { channels: 2, ...input } as Parameters<typeof resolveRecorderOptions>[0];
    expect(() => resolveRecorderOptions(given)).toThrow(UsageError);
    expect(() => resolveRecorderOptions(given)).toThrow(message);
  });
});

// The back-off schedule is the specification (0.5 s doubling to 30 s, reset after
// a healthy minute); exponential back-off itself is common practice, no source.
describe('restart policy', () => {
  it('waits 0.5 s, doubling to at most 30 s', () => {
    const p = new RestartPolicy(null);
    expect(Array.from({ length: 9 }, () => p.onRunEnded(1)).map((d) => (d.giveUp ? -1 : d.retryInS))).toEqual([0.5, 1, 2, 4, 8, 16, 30, 30, 30]);
  });

  it('starts over after a run that delivered audio for a minute', () => {
    const p = new RestartPolicy(null);
    p.onRunEnded(0);
    p.onRunEnded(0);
    expect(p.onRunEnded(59)).toEqual({ giveUp: false, retryInS: 2 });
    expect(p.onRunEnded(60)).toEqual({ giveUp: false, retryInS: 0.5 });
    p.onRunEnded(0);
    p.onAudio(61);
    expect(p.consecutiveFailures).toBe(0);
  });

  it('gives up after maxRestarts failed restarts in a row; 0 means no restart at all', () => {
    const p = new RestartPolicy(2);
    expect(p.onRunEnded(0).giveUp).toBe(false);
    expect(p.onRunEnded(0).giveUp).toBe(false);
    expect(p.onRunEnded(0)).toEqual({ giveUp: true, failures: 3 });
    expect(new RestartPolicy(0).onRunEnded(0)).toEqual({ giveUp: true, failures: 1 });
  });
});

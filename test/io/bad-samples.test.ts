/**
 * Samples that are not sound (NaN, +-Inf, absurd magnitudes like 1e30) in float WAV files.
 * The files are written by numpy (python3), an independent writer, from a delayed-noise pair
 * made by sox; one sox-made float WAV gets a patched sample. Expected: the bad samples are
 * replaced with 0, said once on stderr with their stream time, and every hop after them gives
 * the same direction as the clean file. Before the fix, one NaN turned every later hop into
 * "no direction" (issue 12, item 6).
 */
import { execFileSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { deinterleave, MAX_FLOAT_SAMPLE, noReplacedSamples } from '../../src/sources/pcm-decode.js';
import { openWavSource } from '../../src/sources/wav-source.js';
import { readWavFile } from '../../src/sources/wav-reader.js';
import { runCli } from '../helpers/cli.js';
import { soxDelayedSignal } from '../helpers/sox.js';
import { drain } from '../helpers/audio.js';
import { sox } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

const RATE = 48000;
/** Where the bad sample goes: a little after 1 s into a 2 s file. */
const BAD_FRAME = RATE + 123;
const BAD_TIME = (BAD_FRAME / RATE).toFixed(4); // "1.0026"

// numpy writes a plain IEEE-float WAV (format tag 3, fmt + fact + data) from raw float32
// frames, with chosen samples set to a chosen value first.
const NUMPY_WRITER = `
import sys, struct, json
import numpy as np
raw, out, bits, edits = sys.argv[1], sys.argv[2], int(sys.argv[3]), json.loads(sys.argv[4])
x = np.fromfile(raw, dtype='<f4').reshape(-1, 2).astype(np.float64)
for frame, ch, value in edits:
    x[frame, ch] = float(value)
data = x.astype('<f4' if bits == 32 else '<f8').tobytes()
nch, rate, bps = x.shape[1], ${RATE}, bits // 8
fmt = struct.pack('<HHIIHH', 3, nch, rate, rate * nch * bps, nch * bps, bits)
body = b'WAVE' + b'fmt ' + struct.pack('<I', 16) + fmt + b'fact' + struct.pack('<II', 4, x.shape[0]) \\
    + b'data' + struct.pack('<I', len(data)) + data
open(out, 'wb').write(b'RIFF' + struct.pack('<I', len(body)) + body)
`;

const tmp = tempDir('bad-samples');
afterAll(() => tmp.cleanup());
let raw: string;

/** A float WAV written by numpy; edits are [frame, channel, value as Python's float() reads it]. */
function numpyWav(name: string, bits: 32 | 64, edits: [number, number, string][]): string {
  const out = join(tmp.dir, name);
  execFileSync('python3', ['-c', NUMPY_WRITER, raw, out, String(bits), JSON.stringify(edits)]);
  return out;
}

interface Frame {
  time_s: number;
  azimuth_deg: number | null;
}

function scanFrames(file: string, extra: string[] = []): { frames: Frame[]; stderr: string } {
  const r = runCli(['scan', file, '--spacing', '0.2', '--frames', ...extra]);
  expect(r.status, r.stderr).toBe(0);
  return { frames: r.stdout.trim().split('\n').map((l) => JSON.parse(l) as Frame), stderr: r.stderr };
}

let clean: Frame[];
beforeAll(() => {
  // A 0.2 m pair, channel 1 later by 100 samples at 480 kHz (208.3 us): sox, as in scan-cli.
  const pair = soxDelayedSignal({ out: join(tmp.dir, 'pair.wav'), delaysUp: [0, 100], durationS: 2, bits: 24 }, tmp.dir);
  raw = join(tmp.dir, 'pair.f32');
  sox([pair, '-t', 'raw', '-e', 'floating-point', '-b', '32', '-L', raw]);
  const r = scanFrames(numpyWav('clean.wav', 32, []));
  clean = r.frames;
  expect(r.stderr).not.toMatch(/not sound|replaced/);
});

/** Hops that end after the bad sample: same azimuth as the clean file (within 0.5 degree). */
function expectSameDirectionsAfter(frames: Frame[]): void {
  expect(frames.length).toBe(clean.length);
  const after = frames.map((f, i) => ({ f, c: clean[i]! })).filter(({ f }) => f.time_s > BAD_FRAME / RATE);
  expect(after.length).toBeGreaterThan(80);
  const cleanVoiced = after.filter(({ c }) => c.azimuth_deg !== null).length;
  expect(cleanVoiced / after.length).toBeGreaterThan(0.9);
  const same = after.filter(({ f, c }) => (f.azimuth_deg === null) === (c.azimuth_deg === null) && (c.azimuth_deg === null || Math.abs(f.azimuth_deg! - c.azimuth_deg) < 0.5));
  expect(same.length / after.length).toBeGreaterThan(0.98);
}

const warnings = (stderr: string): string[] => stderr.split('\n').filter((l) => /not sound|replaced with 0/.test(l));

describe('float samples that are not sound (numpy-written WAVs, sox-made signal)', () => {
  it.each([
    ['NaN', 32, 'nan', /NaN/],
    ['+Inf', 32, 'inf', /\+Inf/],
    ['-Inf', 32, '-inf', /-Inf/],
    ['1e30', 32, '1e30', /1\.00e\+30/],
    ['NaN in a 64-bit float file', 64, 'nan', /NaN/],
  ] as const)('%s: replaced, said once with its time, later hops as on the clean file', (_name, bits, value, kind) => {
    const file = numpyWav(`bad-${bits}-${value}.wav`, bits, [[BAD_FRAME, 1, value]]);
    const { frames, stderr } = scanFrames(file);
    expectSameDirectionsAfter(frames);
    const said = warnings(stderr);
    expect(said).toHaveLength(1);
    expect(said[0]).toContain(`${BAD_TIME} s`);
    expect(said[0]).toMatch(kind);
  });

  it('many bad samples: the first said once with its time, the total at the end and in --summary', () => {
    // 20 NaNs (10 frames x 2 channels) from BAD_FRAME on, and one +Inf half a second later.
    const edits: [number, number, string][] = [];
    for (let i = 0; i < 10; i++) for (const ch of [0, 1]) edits.push([BAD_FRAME + i, ch, 'nan']);
    edits.push([BAD_FRAME + RATE / 2, 0, 'inf']);
    const { frames, stderr } = scanFrames(numpyWav('bad-many.wav', 32, edits), ['--summary']);
    const said = warnings(stderr);
    expect(said).toHaveLength(3); // first one, the total at the end, the summary line
    expect(said[0]).toContain(`${BAD_TIME} s`);
    expect(said[1]).toMatch(/21 samples in all/);
    expect(said[2]).toMatch(/21 samples were .* \(the first at 1\.0026 s\)/);
    expectSameDirectionsAfter(frames);
  });

  it('a 32-bit float WAV written by sox, one sample patched to +Inf: replaced and reported by the streaming source', async () => {
    const file = join(tmp.dir, 'sox-float.wav');
    sox(['-t', 'raw', '-r', String(RATE), '-c', '2', '-e', 'floating-point', '-b', '32', '-L', raw, '-e', 'floating-point', '-b', '32', file]);
    const bytes = readFileSync(file);
    const data = bytes.indexOf('data', 12, 'latin1') + 8;
    expect(bytes.readUInt16LE(20)).toBe(3); // sox wrote plain IEEE float
    bytes.writeFloatLE(Infinity, data + (BAD_FRAME * 2 + 0) * 4);
    writeFileSync(file, bytes);
    const said: string[] = [];
    const src = await openWavSource(file, { blockFrames: 1000, onWarning: (m) => said.push(m) });
    const { samples } = await drain(src);
    expect(src.replacedSamples?.()).toEqual({ count: 1, firstTimeS: BAD_FRAME / RATE });
    await src.close();
    expect(samples[BAD_FRAME * 2]).toBe(0);
    expect(samples.every(Number.isFinite)).toBe(true);
    expect(said).toHaveLength(1);
    expect(said[0]).toContain(`${BAD_TIME} s`);
    expectSameDirectionsAfter(scanFrames(file).frames);
  });

  it('the whole-file reader (simulate, check-array) follows the same rule', () => {
    const file = numpyWav('bad-reader.wav', 32, [[BAD_FRAME, 0, '-inf'], [BAD_FRAME + 5, 1, '1e30']]);
    const said: string[] = [];
    const w = readWavFile(file, (m) => said.push(m));
    expect(w.channels[0]![BAD_FRAME]).toBe(0);
    expect(w.channels[1]![BAD_FRAME + 5]).toBe(0);
    expect(said).toHaveLength(2);
    expect(said[0]).toContain(`${BAD_TIME} s`);
    expect(said[1]).toMatch(/2 samples in all/);
  });
});

describe('deinterleave: the rule itself (IEEE 754 bit patterns; the bound is ours, 60 dB over full scale)', () => {
  it.each(['f32', 'f64'] as const)('%s: NaN, +-Inf and |x| > bound become 0 and are counted; the bound itself and ordinary values pass', (enc) => {
    const values = [0.5, NaN, -0.25, MAX_FLOAT_SAMPLE, -MAX_FLOAT_SAMPLE * 1.01, 3, Infinity, -Infinity, 1e30, -1];
    const step = enc === 'f32' ? 4 : 8;
    const bytes = new Uint8Array(values.length * step);
    const view = new DataView(bytes.buffer);
    values.forEach((v, i) => (enc === 'f32' ? view.setFloat32(i * step, v, true) : view.setFloat64(i * step, v, true)));
    // Two channels: frames (0.5, NaN), (-0.25, 1000), (-1010, 3), (Inf, -Inf), (1e30, -1).
    const out = [new Float32Array(5), new Float32Array(5)];
    const replaced = noReplacedSamples();
    deinterleave(enc, bytes, 5, out, 0, replaced);
    expect(Array.from(out[0]!)).toEqual([0.5, -0.25, 0, 0, 0]);
    expect(Array.from(out[1]!)).toEqual([0, 1000, 3, 0, -1]);
    expect(replaced.count).toBe(5);
    expect(replaced.firstFrame).toBe(0); // the NaN in channel 1 of frame 0
    expect(replaced.firstValue).toBeNaN();
    // Fields are set afresh per call.
    deinterleave(enc, bytes.subarray(2 * step, 4 * step), 1, out, 0, replaced);
    expect(replaced).toEqual({ count: 0, firstFrame: -1, firstValue: 0 });
  });
});

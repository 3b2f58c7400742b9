import { execFileSync } from 'node:child_process';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { UsageError } from '../../src/util/errors.js';
import { openWavSource } from '../../src/sources/wav-source.js';
import { drain, maxAbsDiff } from '../helpers/audio.js';
import { sox, soxDecodeInterleaved, synthSpecs } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

const tmp = tempDir('wav');
afterAll(() => tmp.cleanup());

/** Byte offset of a RIFF chunk's header in a WAV file (walked like the format says). */
function chunkAt(buf: Buffer, id: string): number {
  for (let pos = 12; pos + 8 <= buf.length; pos += 8 + buf.readUInt32LE(pos + 4) + (buf.readUInt32LE(pos + 4) & 1)) {
    if (buf.toString('latin1', pos, pos + 4) === id) return pos;
  }
  throw new Error(`test setup: no ${id} chunk`);
}

function chunk(id: string, body: Buffer): Buffer {
  const head = Buffer.alloc(8);
  head.write(id, 0, 'latin1');
  head.writeUInt32LE(body.length, 4);
  return Buffer.concat([head, body, body.length & 1 ? Buffer.alloc(1) : Buffer.alloc(0)]);
}

let n = 0;
function makeWav(soxFormat: string[], channels: number, rate: number, seconds: number): string {
  const file = join(tmp.dir, `t${n++}.wav`);
  sox(['-n', '-r', String(rate), '-c', String(channels), ...soxFormat, file, 'synth', String(seconds), ...synthSpecs(channels), 'vol', '0.8']);
  return file;
}

function writeBytes(name: string, bytes: Buffer): string {
  const file = join(tmp.dir, name);
  writeFileSync(file, bytes);
  return file;
}

/** The sample count sox reports for a file (soxi -s), an independent count of frames. */
function soxFrames(file: string): number {
  return Number(execFileSync('soxi', ['-s', file]).toString().trim());
}

// Encodings as sox writes them. The tolerance is half the encoding's quantisation step
// (so that a scale off by one code, e.g. /32767 for /32768, fails); for 32-bit and float
// data it is float32's resolution near full scale, 2^-23 (common practice, no source).
const ENCODINGS: { name: string; sox: string[]; step: number }[] = [
  { name: 'u8', sox: ['-e', 'unsigned-integer', '-b', '8'], step: 2 ** -8 },
  { name: 's16', sox: ['-e', 'signed-integer', '-b', '16'], step: 2 ** -16 },
  { name: 's24', sox: ['-e', 'signed-integer', '-b', '24'], step: 2 ** -24 },
  { name: 's32', sox: ['-e', 'signed-integer', '-b', '32'], step: 2 ** -23 },
  { name: 'f32', sox: ['-e', 'floating-point', '-b', '32'], step: 2 ** -23 },
  { name: 'f64', sox: ['-e', 'floating-point', '-b', '64'], step: 2 ** -23 },
];
const RATES = [8000, 44100, 48000, 96000];
const CASES = ENCODINGS.flatMap((e, i) => [1, 2, 4, 8].map((channels, j) => ({ ...e, channels, rate: RATES[(i + j) % RATES.length]! })));

describe('WAV source against sox decoding (sox writes and decodes every file)', () => {
  const formatTags = new Set<string>();

  it.each(CASES)('$name, $channels ch, $rate Hz: samples equal sox -e floating-point within half a quantisation step', async (c) => {
    const file = makeWav(c.sox, c.channels, c.rate, 0.137);
    const bytes = readFileSync(file);
    const tag = bytes.readUInt16LE(chunkAt(bytes, 'fmt ') + 8);
    formatTags.add(tag === 0xfffe ? `extensible-${bytes.readUInt16LE(chunkAt(bytes, 'fmt ') + 8 + 24)}` : `plain-${tag}`);
    const src = await openWavSource(file, { blockFrames: 1000, onWarning: (m) => expect.fail(m) });
    expect(src.format.sampleRate).toBe(c.rate);
    expect(src.format.channels).toBe(c.channels);
    expect(src.format.totalFrames).toBe(soxFrames(file));
    const { samples, blockLengths } = await drain(src);
    await src.close();
    const ref = soxDecodeInterleaved(file);
    expect(samples.length).toBe(ref.length);
    expect(maxAbsDiff(samples, ref)).toBeLessThanOrEqual(c.step);
    // Blocks across block boundaries: full blocks, then the remainder.
    const total = soxFrames(file);
    expect(blockLengths).toEqual([...Array<number>(Math.floor(total / 1000)).fill(1000), ...(total % 1000 ? [total % 1000] : [])]);
  });

  it("covered plain PCM, plain float and sox's WAVE_FORMAT_EXTENSIBLE (sox writes it for PCM only; float below)", () => {
    expect([...formatTags].sort()).toEqual(['extensible-1', 'plain-1', 'plain-3']);
  });

  it('block sizes 1, 7 and 4096 give the same samples (sox decoding as reference)', async () => {
    const file = makeWav(['-e', 'signed-integer', '-b', '16'], 3, 16000, 0.3);
    const ref = soxDecodeInterleaved(file);
    for (const blockFrames of [1, 7, 4096]) {
      const src = await openWavSource(file, { blockFrames });
      const { samples } = await drain(src);
      await src.close();
      expect(maxAbsDiff(samples, ref)).toBeLessThanOrEqual(2 ** -16);
    }
  });

  it('reads again from the start when blocks() is called a second time', async () => {
    const file = makeWav(['-b', '16'], 2, 8000, 0.2);
    const src = await openWavSource(file);
    const first = await drain(src);
    const second = await drain(src);
    await src.close();
    expect(maxAbsDiff(first.samples, second.samples)).toBe(0);
    expect(second.samples.length).toBe(soxFrames(file) * 2);
  });
});

describe('WAV layout variants built from sox files', () => {
  const base = makeWav(['-e', 'signed-integer', '-b', '16'], 2, 22050, 0.5);
  const bytes = readFileSync(base);
  const fmtAt = chunkAt(bytes, 'fmt ');
  const dataAt = chunkAt(bytes, 'data');
  const fmt = bytes.subarray(fmtAt, dataAt); // plain PCM from sox: fmt then data, nothing between
  const data = bytes.subarray(dataAt);
  const riff = (body: Buffer, id = 'RIFF'): Buffer => {
    const h = Buffer.from(`${id}\0\0\0\0WAVE`, 'latin1');
    h.writeUInt32LE(body.length + 4, 4);
    return Buffer.concat([h, body]);
  };
  const ref = soxDecodeInterleaved(base);
  const read = async (file: string, warnings: string[] = []) => {
    const src = await openWavSource(file, { blockFrames: 333, onWarning: (m) => warnings.push(m) });
    const out = await drain(src);
    await src.close();
    return out.samples;
  };

  it('skips a LIST chunk of odd size (with its pad byte) and an unknown chunk before data; sox reads the built file the same', async () => {
    // Built by splicing: RIFF header + fmt (from sox) + LIST/INFO with a 27-byte ICMT text
    // (odd, so a pad byte follows) + an unknown 'wxyz' chunk + data (from sox).
    const info = Buffer.concat([Buffer.from('INFO', 'latin1'), chunk('ICMT', Buffer.from('frog chorus, north pond!', 'latin1'))]);
    const file = writeBytes('list.wav', riff(Buffer.concat([fmt, chunk('LIST', Buffer.concat([info, Buffer.from('x')])), chunk('wxyz', Buffer.alloc(6, 7)), data])));
    expect(maxAbsDiff(soxDecodeInterleaved(file), ref)).toBe(0); // sox agrees the file is sound
    expect(maxAbsDiff(await read(file), ref)).toBeLessThanOrEqual(2 ** -16);
  });

  it('reads WAVE_FORMAT_EXTENSIBLE with the IEEE float sub-format; sox reads the built file the same', async () => {
    // Built from a plain 32-bit float file of sox: its fmt chunk replaced by a 40-byte
    // extensible one (cbSize 22, 32 valid bits, no channel mask, KSDATAFORMAT_SUBTYPE_IEEE_FLOAT).
    const f32 = makeWav(['-e', 'floating-point', '-b', '32'], 4, 48000, 0.1);
    const b = readFileSync(f32);
    const ext = Buffer.alloc(40);
    b.copy(ext, 0, chunkAt(b, 'fmt ') + 8, chunkAt(b, 'fmt ') + 8 + 16);
    ext.writeUInt16LE(0xfffe, 0);
    ext.writeUInt16LE(22, 16);
    ext.writeUInt16LE(32, 18);
    Buffer.from('0300000000001000800000aa00389b71', 'hex').copy(ext, 24);
    const file = writeBytes('ext-float.wav', riff(Buffer.concat([chunk('fmt ', ext), b.subarray(chunkAt(b, 'data'))])));
    const f32ref = soxDecodeInterleaved(f32);
    expect(maxAbsDiff(soxDecodeInterleaved(file), f32ref)).toBe(0);
    expect(maxAbsDiff(await read(file), f32ref)).toBe(0);
  });

  it('reads a data chunk that comes before the fmt chunk', async () => {
    const file = writeBytes('data-first.wav', riff(Buffer.concat([chunk('JUNK', Buffer.alloc(3)), data, fmt])));
    expect(maxAbsDiff(await read(file), ref)).toBeLessThanOrEqual(2 ** -16);
  });

  it.each([0, 0xffffffff])('a data size of %d (as streaming writers leave it) means "to end of file", without a warning', async (size) => {
    const patched = Buffer.from(bytes);
    patched.writeUInt32LE(size, dataAt + 4);
    patched.writeUInt32LE(size, 4);
    const warnings: string[] = [];
    expect(maxAbsDiff(await read(writeBytes(`open-${size}.wav`, patched), warnings), ref)).toBeLessThanOrEqual(2 ** -16);
    expect(warnings).toEqual([]);
  });

  it('reads RF64 (EBU Tech 3306): the ds64 chunk gives the data size, so a trailing chunk is not read as audio', async () => {
    const ds64 = Buffer.alloc(28);
    ds64.writeBigUInt64LE(BigInt(data.length - 8), 8);
    const open = Buffer.from(data);
    open.writeUInt32LE(0xffffffff, 4);
    const file = writeBytes('rf64.wav', riff(Buffer.concat([chunk('ds64', ds64), fmt, open, chunk('LIST', Buffer.alloc(40, 1))]), 'RF64'));
    expect(maxAbsDiff(await read(file), ref)).toBeLessThanOrEqual(2 ** -16);
  });

  it('a file cut with head -c is read up to where it ends, with one warning (partial last frame dropped)', async () => {
    const cutBytes = dataAt + 8 + 4 * 2000 + 3; // 2000 whole frames of 4 bytes, then 3 bytes of the next
    const cut = join(tmp.dir, 'cut.wav');
    execFileSync('sh', ['-c', `head -c ${cutBytes} "${base}" > "${cut}"`]);
    const warnings: string[] = [];
    const samples = await read(cut, warnings);
    expect(samples.length).toBe(2000 * 2);
    expect(maxAbsDiff(samples, ref.subarray(0, 4000))).toBeLessThanOrEqual(2 ** -16);
    expect(warnings).toEqual([`${cut} is truncated: the header promises 0.5 s, the file holds 0.1 s; analysing what is there`]);
  });

  it('a data chunk size that is not a whole number of frames drops the partial frame with a warning', async () => {
    const patched = Buffer.from(bytes);
    patched.writeUInt32LE(patched.readUInt32LE(dataAt + 4) - 1, dataAt + 4);
    const warnings: string[] = [];
    const samples = await read(writeBytes('odd.wav', patched), warnings);
    expect(samples.length).toBe(ref.length - 2);
    expect(warnings).toHaveLength(1);
    expect(warnings[0]).toMatch(/ends inside a frame \(3 of 4 bytes\); the partial frame is dropped/);
  });
});

describe('bad WAV input: one-line UsageError naming the file and what to do', () => {
  const good = makeWav(['-e', 'signed-integer', '-b', '16'], 2, 8000, 0.05);
  const goodBytes = readFileSync(good);
  const fmtBody = chunkAt(goodBytes, 'fmt ') + 8;
  const patch = (name: string, edit: (b: Buffer) => void): string => {
    const b = Buffer.from(goodBytes);
    edit(b);
    return writeBytes(name, b);
  };
  const dir = join(tmp.dir, 'a-directory.wav');
  mkdirSync(dir);

  const cases: [string, () => string, RegExp][] = [
    ['missing file', () => join(tmp.dir, 'nope.wav'), /cannot read .*nope\.wav: no such file; check the path/],
    ['a directory', () => dir, /a-directory\.wav is a directory, not a WAV file; give the path of a \.wav recording/],
    ['a text file', () => writeBytes('notes.wav', Buffer.from('frog counts, night 3\n')), /notes\.wav is not a WAV file \(no RIFF\/WAVE header\)/],
    ['a 5-byte file', () => writeBytes('tiny.wav', Buffer.from('RIFF\0')), /tiny\.wav is not a WAV file/],
    ['no fmt chunk', () => patch('nofmt.wav', (b) => b.write('junk', fmtBody - 8, 'latin1')), /nofmt\.wav has no fmt chunk, so its sample format is unknown/],
    ['no data chunk', () => patch('nodata.wav', (b) => b.write('dat_', chunkAt(b, 'data'), 'latin1')), /nodata\.wav has no data chunk \(no audio in it\)/],
    ['zero channels', () => patch('zeroch.wav', (b) => b.writeUInt16LE(0, fmtBody + 2)), /zeroch\.wav: its header says 0 channels/],
    ['zero sample rate', () => patch('zerorate.wav', (b) => b.writeUInt32LE(0, fmtBody + 4)), /zerorate\.wav: its header says a sample rate of 0 Hz/],
    ['block align inconsistent', () => patch('align.wav', (b) => b.writeUInt16LE(6, fmtBody + 12)), /align\.wav: its header is inconsistent: block align 6 bytes, but 2 channels x 16 bits make 4/],
    ['12-bit PCM', () => patch('12bit.wav', (b) => b.writeUInt16LE(12, fmtBody + 14)), /12bit\.wav holds 12-bit integer PCM \(WAV\), which bearline does not read; convert it/],
    ['9 channels (sox)', () => makeWav(['-b', '16'], 9, 8000, 0.01), /has 9 channels; bearline handles up to 8/],
    ['A-law (sox)', () => makeWav(['-e', 'a-law'], 1, 8000, 0.01), /holds A-law \(format 0x0006\) \(WAV\), which bearline does not read; convert it to PCM first/],
    ['mu-law (sox)', () => makeWav(['-e', 'mu-law'], 1, 8000, 0.01), /holds mu-law \(format 0x0007\)/],
    ['MS ADPCM (sox)', () => makeWav(['-e', 'ms-adpcm'], 1, 8000, 0.01), /holds Microsoft ADPCM \(format 0x0002\)/],
    ['IMA ADPCM (sox)', () => makeWav(['-e', 'ima-adpcm'], 1, 8000, 0.01), /holds IMA ADPCM \(format 0x0011\)/],
  ];

  it.each(cases)('%s', async (_, make, message) => {
    const file = make();
    const err = await openWavSource(file).then(
      () => null,
      (e: unknown) => e,
    );
    expect(err).toBeInstanceOf(UsageError);
    expect((err as Error).message).toMatch(message);
    expect((err as Error).message).toContain(file);
    expect((err as Error).message).not.toContain('\n');
  });
});

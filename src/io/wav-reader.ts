import { readFileSync } from 'node:fs';
import { UsageError } from '../errors.js';

/** A whole WAV file as planar float samples in [-1, 1]. */
export interface WavData {
  sampleRate: number;
  channels: Float32Array[];
}

/** Decode a WAV file held in memory: PCM 8/16/24/32-bit or IEEE float 32/64 (plain or extensible header). */
export function decodeWav(buf: Buffer, where: string): WavData {
  const bad = (what: string): never => {
    throw new UsageError(`${where}: ${what}`);
  };
  if (buf.length < 12 || buf.toString('ascii', 0, 4) !== 'RIFF' || buf.toString('ascii', 8, 12) !== 'WAVE') {
    bad('is not a WAV file (no RIFF/WAVE header): give a WAV file');
  }
  let off = 12;
  let fmt: { tag: number; channels: number; rate: number; bits: number } | null = null;
  let data: Buffer | null = null;
  while (off + 8 <= buf.length) {
    const id = buf.toString('ascii', off, off + 4);
    let size = buf.readUInt32LE(off + 4);
    const body = off + 8;
    if (id === 'data' && (size === 0 || size === 0xffffffff || body + size > buf.length)) size = buf.length - body;
    if (id === 'fmt ') {
      if (size < 16) bad('has a short fmt chunk');
      let tag = buf.readUInt16LE(body);
      if (tag === 0xfffe && size >= 26) tag = buf.readUInt16LE(body + 24);
      fmt = { tag, channels: buf.readUInt16LE(body + 2), rate: buf.readUInt32LE(body + 4), bits: buf.readUInt16LE(body + 14) };
    } else if (id === 'data') {
      data = buf.subarray(body, body + size);
    }
    off = body + size + (size & 1);
  }
  if (!fmt) return bad('has no fmt chunk');
  if (!data) return bad('has no data chunk');
  const f = fmt;
  if (f.channels < 1) bad('declares no channels');
  const isFloat = f.tag === 3;
  if (!(f.tag === 1 || isFloat)) bad(`uses WAV format tag ${f.tag}: only PCM and IEEE float are read (convert with sox first)`);
  const bps = f.bits / 8;
  if (isFloat ? !(bps === 4 || bps === 8) : !(bps >= 1 && bps <= 4 && Number.isInteger(bps))) bad(`uses ${f.bits}-bit samples, which are not supported`);
  const frames = Math.floor(data.length / (bps * f.channels));
  const channels = Array.from({ length: f.channels }, () => new Float32Array(frames));
  const scale = 2 ** (f.bits - 1);
  let o = 0;
  for (let i = 0; i < frames; i++) {
    for (let c = 0; c < f.channels; c++) {
      let v: number;
      if (isFloat) v = bps === 4 ? data.readFloatLE(o) : data.readDoubleLE(o);
      else if (bps === 1) v = (data.readUInt8(o) - 128) / 128;
      else v = data.readIntLE(o, bps) / scale;
      channels[c]![i] = v;
      o += bps;
    }
  }
  return { sampleRate: f.rate, channels };
}

export function readWavFile(path: string): WavData {
  let buf: Buffer;
  try {
    buf = readFileSync(path);
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    throw new UsageError(code === 'ENOENT' ? `WAV file ${path} does not exist: check the path` : `cannot read WAV file ${path}: ${(err as Error).message}`);
  }
  return decodeWav(buf, `WAV file ${path}`);
}

import { readFileSync } from 'node:fs';
import { UsageError } from '../util/errors.js';
import type { WarningSink } from './audio-source.js';
import { deinterleave } from './pcm-decode.js';
import { ReplacedSamplesReport } from './replaced-samples-report.js';
import { stderrWarning } from '../util/stderr-warning.js';
import { isOpenEndedSize, parseFmtChunk, type WavFormat } from './wav-format.js';

/** A whole WAV file as planar float samples in [-1, 1]. */
export interface WavData {
  sampleRate: number;
  channels: Float32Array[];
}

/**
 * Decode a WAV file held in memory (for the simulator's short WAV signals). The chunks are
 * walked here; the fmt chunk and the samples are read by the same code as the streaming
 * source (wav-format.ts, pcm-decode.ts), so both accept the same files and replace the same
 * samples that are not sound (said once through `warn`).
 */
export function decodeWav(buf: Buffer, where: string, warn: WarningSink = stderrWarning): WavData {
  if (buf.length < 12 || buf.toString('ascii', 0, 4) !== 'RIFF' || buf.toString('ascii', 8, 12) !== 'WAVE') {
    throw new UsageError(`${where}: is not a WAV file (no RIFF/WAVE header): give a WAV file`);
  }
  let off = 12;
  let fmt: WavFormat | null = null;
  let data: Buffer | null = null;
  while (off + 8 <= buf.length) {
    const id = buf.toString('ascii', off, off + 4);
    let size = buf.readUInt32LE(off + 4);
    const body = off + 8;
    if (id === 'data' && (isOpenEndedSize(size) || body + size > buf.length)) size = buf.length - body;
    if (id === 'fmt ') fmt = parseFmtChunk(buf.subarray(body, body + size), where);
    else if (id === 'data') data = buf.subarray(body, body + size);
    off = body + size + (size & 1);
  }
  if (!fmt) throw new UsageError(`${where}: has no fmt chunk; the file is damaged, re-export it`);
  if (!data) throw new UsageError(`${where}: has no data chunk; the file is damaged, re-export it`);
  const frames = Math.floor(data.length / fmt.blockAlign);
  const channels = Array.from({ length: fmt.channels }, () => new Float32Array(frames));
  const replaced = new ReplacedSamplesReport(where, fmt.sampleRate, warn);
  deinterleave(fmt.encoding, data, frames, channels, 0, replaced.scratch);
  replaced.note(0);
  replaced.finish();
  return { sampleRate: fmt.sampleRate, channels };
}

export function readWavFile(path: string, warn: WarningSink = stderrWarning): WavData {
  let buf: Buffer;
  try {
    buf = readFileSync(path);
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    throw new UsageError(code === 'ENOENT' ? `WAV file ${path} does not exist: check the path` : `cannot read WAV file ${path}: ${(err as Error).message}`);
  }
  return decodeWav(buf, `WAV file ${path}`, warn);
}

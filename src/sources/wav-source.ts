import { open, stat, type FileHandle } from 'node:fs/promises';
import { RuntimeFailure, UsageError } from '../util/errors.js';
import type { AudioBlock, AudioFormat, AudioSource, WarningSink } from './audio-source.js';
import { deinterleave, type SampleEncoding } from './pcm-decode.js';
import { ReplacedSamplesReport } from './replaced-samples-report.js';
import { stderrWarning } from '../util/stderr-warning.js';
import { checkBlockFrames } from './stream-options.js';
import { isOpenEndedSize, parseFmtChunk, planDataRange, type WavFormat } from './wav-format.js';

export interface WavSourceOptions {
  /** Frames per block (default 4096). */
  blockFrames?: number;
  /** Where warnings (truncated file, partial frame, samples that are not sound) go; default: stderr. */
  onWarning?: WarningSink;
}

export interface WavSource extends AudioSource {
  readonly path: string;
  readonly encoding: SampleEncoding;
  /** Blocks of frames [from, to) only (a take cut from a long recording), with the same warnings as blocks(). */
  span(from: number, to: number): AsyncIterable<AudioBlock>;
}

/** The fmt chunk is 16, 18 or 40 bytes in practice; anything longer is read only this far. */
const FMT_READ_LIMIT = 1024;

function openError(path: string, err: unknown): UsageError {
  const code = (err as NodeJS.ErrnoException).code;
  if (code === 'ENOENT') return new UsageError(`cannot read ${path}: no such file; check the path`);
  if (code === 'EACCES' || code === 'EPERM') return new UsageError(`cannot read ${path}: permission denied; check the file's permissions`);
  if (code === 'EISDIR') return new UsageError(`${path} is a directory, not a WAV file; give the path of a .wav recording`);
  return new UsageError(`cannot read ${path}: ${(err as Error).message}`);
}

function notRegular(path: string): UsageError {
  return new UsageError(`${path} is not a regular file (a device, FIFO or socket), so it is not read as a WAV file; give a .wav recording, or pipe raw PCM to the --stdin input`);
}

async function readAt(fh: FileHandle, path: string, buf: Uint8Array, length: number, position: number): Promise<number> {
  try {
    const { bytesRead } = await fh.read(buf, 0, length, position);
    return bytesRead;
  } catch (err) {
    throw new RuntimeFailure(`reading ${path} failed: ${(err as Error).message}`);
  }
}

const ascii = (b: Uint8Array, at: number): string => String.fromCharCode(b[at]!, b[at + 1]!, b[at + 2]!, b[at + 3]!);

interface Layout {
  format: WavFormat;
  dataOffset: number;
  dataSize: number;
}

/**
 * Walk the RIFF chunks (any order, unknown ones skipped with their odd-size pad byte) and
 * find the fmt and data chunks. RF64 files (EBU Tech 3306) are read too: their ds64 chunk
 * carries the 64-bit data size.
 */
async function readLayout(fh: FileHandle, path: string, fileSize: number): Promise<Layout> {
  const head = new Uint8Array(FMT_READ_LIMIT);
  const view = new DataView(head.buffer);
  const got = await readAt(fh, path, head, 12, 0);
  const riff = got >= 12 ? ascii(head, 0) : '';
  if ((riff !== 'RIFF' && riff !== 'RF64') || ascii(head, 8) !== 'WAVE') {
    throw new UsageError(`${path} is not a WAV file (no RIFF/WAVE header); give a .wav recording, or convert it with sox first`);
  }
  let format: WavFormat | null = null;
  let dataOffset = -1;
  let dataSize = 0;
  let ds64DataSize: number | null = null;
  let pos = 12;
  while (pos + 8 <= fileSize) {
    if ((await readAt(fh, path, head, 8, pos)) < 8) break;
    const id = ascii(head, 0);
    const size = view.getUint32(4, true);
    const body = pos + 8;
    if (id === 'fmt ') {
      const n = await readAt(fh, path, head, Math.min(size, FMT_READ_LIMIT), body);
      format = parseFmtChunk(head.subarray(0, n), path);
    } else if (id === 'ds64' && riff === 'RF64') {
      if ((await readAt(fh, path, head, 16, body)) === 16) ds64DataSize = Number(view.getBigUint64(8, true));
    } else if (id === 'data') {
      dataOffset = body;
      dataSize = size === 0xffffffff && ds64DataSize !== null ? ds64DataSize : size;
      if (format !== null) break;
      if (isOpenEndedSize(dataSize)) {
        throw new UsageError(`${path}: its data chunk comes before the fmt chunk and has no length, so the format cannot be found; re-export the file`);
      }
    }
    pos = body + size + (size & 1);
  }
  if (format === null) throw new UsageError(`${path} has no fmt chunk, so its sample format is unknown; the file is damaged, re-export it`);
  if (dataOffset < 0) throw new UsageError(`${path} has no data chunk (no audio in it); check that the recording was finished and saved`);
  return { format, dataOffset, dataSize };
}

/**
 * Open a WAV file for streaming in constant memory: fixed buffers, positional reads.
 * Throws UsageError (one line naming the file and what to do) for unreadable or malformed
 * files; a file shorter than its header says is read to where it ends, with one warning.
 * blocks() may be called again after it ends to read the file from the start (not while
 * another iteration is running: they share the buffers).
 */
export async function openWavSource(path: string, opts: WavSourceOptions = {}): Promise<WavSource> {
  const blockFrames = checkBlockFrames(opts.blockFrames);
  const warn = opts.onWarning ?? stderrWarning;
  // Looked at before opening: opening a FIFO for reading waits for a writer, maybe for ever.
  try {
    const st = await stat(path);
    if (!st.isFile() && !st.isDirectory()) throw notRegular(path);
  } catch (err) {
    if (err instanceof UsageError) throw err;
    throw openError(path, err);
  }
  let fh: FileHandle;
  try {
    fh = await open(path, 'r');
  } catch (err) {
    throw openError(path, err);
  }
  let layout: Layout;
  let frames: number;
  try {
    const st = await fh.stat();
    if (st.isDirectory()) throw openError(path, Object.assign(new Error('is a directory'), { code: 'EISDIR' }));
    if (!st.isFile()) throw notRegular(path);
    layout = await readLayout(fh, path, st.size);
    const range = planDataRange(path, layout.format, layout.dataOffset, layout.dataSize, st.size);
    frames = range.frames;
    if (range.warning) warn(range.warning);
  } catch (err) {
    await fh.close();
    throw err;
  }

  const { format: wav, dataOffset } = layout;
  const format: AudioFormat = { sampleRate: wav.sampleRate, channels: wav.channels, totalFrames: frames };
  const bytes = new Uint8Array(blockFrames * wav.blockAlign);
  const arrays = Array.from({ length: wav.channels }, () => new Float32Array(blockFrames));
  const block: { channels: readonly Float32Array[]; length: number } = { channels: arrays, length: 0 };
  let closed = false;
  // Per reading of the file (blocks() may start again from the beginning).
  let replaced = new ReplacedSamplesReport(path, wav.sampleRate, warn);

  async function* span(from: number, to: number): AsyncGenerator<AudioBlock> {
    replaced = new ReplacedSamplesReport(path, wav.sampleRate, warn);
    let done = Math.max(0, Math.min(from, frames));
    const end = Math.min(to, frames);
    while (done < end && !closed) {
      const want = Math.min(blockFrames, end - done);
      const got = await readAt(fh, path, bytes, want * wav.blockAlign, dataOffset + done * wav.blockAlign);
      const n = Math.floor(got / wav.blockAlign);
      if (n > 0) {
        deinterleave(wav.encoding, bytes, n, arrays, 0, replaced.scratch);
        replaced.note(done);
        block.length = n;
        done += n;
        yield block;
      }
      if (n < want) {
        const held = (x: number): string => (x / wav.sampleRate).toFixed(1);
        warn(`${path} became shorter while it was read: expected ${held(frames)} s, got ${held(done)} s; analysing what is there`);
        break;
      }
    }
    replaced.finish();
  }
  const blocks = (): AsyncGenerator<AudioBlock> => span(0, frames);

  return {
    path,
    encoding: wav.encoding,
    format,
    blocks,
    span,
    replacedSamples: () => replaced.counted,
    async close() {
      if (closed) return;
      closed = true;
      await fh.close();
    },
  };
}

import { UsageError } from '../util/errors.js';
import type { SampleEncoding } from './pcm-decode.js';
import { MAX_CHANNELS } from './stream-options.js';

/**
 * Pure parsing of a WAV file's fmt chunk, and the arithmetic of its data range.
 * The layout follows the RIFF/WAVE format (Microsoft/IBM Multimedia Programming Interface
 * and Data Specifications 1.0, 1991) and its WAVE_FORMAT_EXTENSIBLE extension (Microsoft,
 * "Multiple channel audio data and WAVE files"); the codes below are from those documents.
 */
export interface WavFormat {
  readonly encoding: SampleEncoding;
  readonly channels: number;
  readonly sampleRate: number;
  /** Bytes per frame (all channels of one sample instant). */
  readonly blockAlign: number;
}

const PCM = 0x0001;
const IEEE_FLOAT = 0x0003;
const EXTENSIBLE = 0xfffe;

/** Names of other common format codes, so that the message says what the file holds. */
const KNOWN_CODES: Readonly<Record<number, string>> = {
  0x0002: 'Microsoft ADPCM',
  0x0006: 'A-law',
  0x0007: 'mu-law',
  0x0011: 'IMA ADPCM',
  0x0031: 'GSM 6.10',
  0x0050: 'MPEG audio',
  0x0055: 'MPEG Layer 3 (MP3)',
};

/** Bytes 2..15 of the sub-format GUID shared by all KSDATAFORMAT_SUBTYPE_* of WAVE codes. */
const GUID_TAIL = [0x00, 0x00, 0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xaa, 0x00, 0x38, 0x9b, 0x71];

const CONVERT_HINT = 'convert it to PCM first, e.g. with: sox IN.wav -e signed-integer -b 16 OUT.wav';

function describeCode(code: number): string {
  const hex = `0x${code.toString(16).padStart(4, '0')}`;
  const name = KNOWN_CODES[code];
  return name ? `${name} (format ${hex})` : `format code ${hex}`;
}

/** Parse the body of a fmt chunk; `file` names the file in error messages. */
export function parseFmtChunk(body: Uint8Array, file: string): WavFormat {
  if (body.length < 16) throw new UsageError(`${file}: its fmt chunk is only ${body.length} bytes (16 needed); the file is damaged, re-export it`);
  const v = new DataView(body.buffer, body.byteOffset, body.byteLength);
  let code = v.getUint16(0, true);
  const channels = v.getUint16(2, true);
  const sampleRate = v.getUint32(4, true);
  const blockAlign = v.getUint16(12, true);
  const bits = v.getUint16(14, true);
  let kind = 'WAV';
  if (code === EXTENSIBLE) {
    kind = 'WAVE_FORMAT_EXTENSIBLE';
    if (body.length < 40 || v.getUint16(16, true) < 22) {
      throw new UsageError(`${file}: its WAVE_FORMAT_EXTENSIBLE fmt chunk is too short to name a sub-format; the file is damaged, re-export it`);
    }
    const tailMatches = GUID_TAIL.every((b, i) => body[26 + i] === b);
    if (!tailMatches) throw new UsageError(`${file}: its WAVE_FORMAT_EXTENSIBLE sub-format is not a standard WAVE code, which bearline does not read; ${CONVERT_HINT}`);
    code = v.getUint16(24, true);
  }
  if (channels === 0) throw new UsageError(`${file}: its header says 0 channels; the file is damaged, re-export it`);
  if (channels > MAX_CHANNELS) {
    throw new UsageError(`${file} has ${channels} channels; bearline handles up to ${MAX_CHANNELS}: extract the mic channels first, e.g. with: sox IN.wav OUT.wav remix 1 2 3 4`);
  }
  if (sampleRate === 0) throw new UsageError(`${file}: its header says a sample rate of 0 Hz; the file is damaged, re-export it`);
  const encoding = encodingOf(code, bits);
  if (encoding === null) {
    const what = code === PCM ? `${bits}-bit integer PCM` : code === IEEE_FLOAT ? `${bits}-bit float` : describeCode(code);
    throw new UsageError(`${file} holds ${what} (${kind}), which bearline does not read; ${CONVERT_HINT}`);
  }
  const expected = (channels * bits) / 8;
  if (blockAlign !== expected) {
    throw new UsageError(
      `${file}: its header is inconsistent: block align ${blockAlign} bytes, but ${channels} channels x ${bits} bits make ${expected}; the file is damaged, re-export it`,
    );
  }
  return { encoding, channels, sampleRate, blockAlign };
}

function encodingOf(code: number, bits: number): SampleEncoding | null {
  if (code === PCM) {
    if (bits === 8) return 'u8';
    if (bits === 16) return 's16';
    if (bits === 24) return 's24';
    if (bits === 32) return 's32';
  } else if (code === IEEE_FLOAT) {
    if (bits === 32) return 'f32';
    if (bits === 64) return 'f64';
  }
  return null;
}

/** A data size of 0 or 0xFFFFFFFF is what streaming writers leave: it means "to end of file". */
export function isOpenEndedSize(size: number): boolean {
  return size === 0 || size === 0xffffffff;
}

export interface DataRange {
  /** Whole frames that can be read. */
  readonly frames: number;
  /** Set when the file is shorter than the header says, or ends inside a frame. */
  readonly warning: string | null;
}

/**
 * How many frames to read from a data chunk at `dataOffset` of declared `declaredSize`
 * bytes in a file of `fileSize` bytes.
 */
export function planDataRange(file: string, format: WavFormat, dataOffset: number, declaredSize: number, fileSize: number): DataRange {
  const onDisk = Math.max(0, fileSize - dataOffset);
  const openEnded = isOpenEndedSize(declaredSize);
  const bytes = openEnded ? onDisk : Math.min(declaredSize, onDisk);
  const frames = Math.floor(bytes / format.blockAlign);
  const seconds = (n: number): string => (n / format.blockAlign / format.sampleRate).toFixed(1);
  let warning: string | null = null;
  if (!openEnded && declaredSize > onDisk) {
    warning = `${file} is truncated: the header promises ${seconds(declaredSize)} s, the file holds ${seconds(onDisk)} s; analysing what is there`;
  } else if (bytes % format.blockAlign !== 0) {
    warning = `${file} ends inside a frame (${bytes % format.blockAlign} of ${format.blockAlign} bytes); the partial frame is dropped`;
  }
  return { frames, warning };
}

/**
 * The on-disk cache of the matrix: rendered audio as 32-bit float WAV (readable by sox, numpy
 * and `bearline scan`), a JSON file beside it with the cell, its truth and the geometry, and
 * the baseline's per-hop results. Keys are hashes of the cell definition and the generator's
 * version, so re-runs only analyse. Files are written aside and renamed into place.
 */
import { createHash } from 'node:crypto';
import { mkdirSync, readFileSync, renameSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

/** BEARLINE_MATRIX_CACHE overrides the place (default: the system's temporary folder). */
export function cacheDir(): string {
  const dir = process.env.BEARLINE_MATRIX_CACHE ?? join(tmpdir(), 'bearline-matrix-cache');
  mkdirSync(dir, { recursive: true });
  return dir;
}

/** JSON with object keys sorted, so equal values hash equally. */
export function stableJson(v: unknown): string {
  if (Array.isArray(v)) return `[${v.map(stableJson).join(',')}]`;
  if (v !== null && typeof v === 'object') {
    const o = v as Record<string, unknown>;
    return `{${Object.keys(o)
      .sort()
      .filter((k) => o[k] !== undefined)
      .map((k) => `${JSON.stringify(k)}:${stableJson(o[k])}`)
      .join(',')}}`;
  }
  return JSON.stringify(v);
}

export function hashOf(v: unknown): string {
  return createHash('sha256').update(typeof v === 'string' ? v : stableJson(v)).digest('hex').slice(0, 20);
}

export function writeAside(path: string, data: string | Uint8Array): void {
  const part = `${path}.partial-${process.pid}`;
  writeFileSync(part, data);
  renameSync(part, path);
}

/** Planar float channels to a 32-bit IEEE float WAV (format 3), interleaved. */
export function writeFloatWav(path: string, sampleRate: number, channels: readonly Float32Array[]): void {
  const n = channels[0]!.length;
  const ch = channels.length;
  const dataBytes = n * ch * 4;
  const buf = Buffer.alloc(44 + dataBytes);
  buf.write('RIFF', 0, 'ascii');
  buf.writeUInt32LE(36 + dataBytes, 4);
  buf.write('WAVE', 8, 'ascii');
  buf.write('fmt ', 12, 'ascii');
  buf.writeUInt32LE(16, 16);
  buf.writeUInt16LE(3, 20);
  buf.writeUInt16LE(ch, 22);
  buf.writeUInt32LE(sampleRate, 24);
  buf.writeUInt32LE(sampleRate * ch * 4, 28);
  buf.writeUInt16LE(ch * 4, 32);
  buf.writeUInt16LE(32, 34);
  buf.write('data', 36, 'ascii');
  buf.writeUInt32LE(dataBytes, 40);
  const out = new Float32Array(buf.buffer, buf.byteOffset + 44, n * ch);
  for (let i = 0; i < n; i++) for (let c = 0; c < ch; c++) out[i * ch + c] = channels[c]![i]!;
  writeAside(path, buf);
}

/** Read back a WAV written by writeFloatWav. */
export function readFloatWav(path: string): { sampleRate: number; channels: Float32Array[] } {
  const buf = readFileSync(path);
  if (buf.toString('ascii', 0, 4) !== 'RIFF' || buf.readUInt16LE(20) !== 3 || buf.toString('ascii', 36, 40) !== 'data') {
    throw new Error(`${path} is not a float WAV of the matrix cache: delete it and run again`);
  }
  const ch = buf.readUInt16LE(22);
  const sampleRate = buf.readUInt32LE(24);
  const n = buf.readUInt32LE(40) / (4 * ch);
  const data = new Float32Array(buf.buffer.slice(buf.byteOffset + 44, buf.byteOffset + 44 + n * ch * 4));
  const channels = Array.from({ length: ch }, () => new Float32Array(n));
  for (let i = 0; i < n; i++) for (let c = 0; c < ch; c++) channels[c]![i] = data[i * ch + c]!;
  return { sampleRate, channels };
}

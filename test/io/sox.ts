/**
 * Test helpers around sox (SoX v14.4.2 here), the independent tool that writes the test
 * files and decodes them for comparison. Nothing here is committed audio: files are made
 * at test time in a temporary directory.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { AudioSource } from '../../src/sources/audio-source.js';

/** The real sox, found once at load time (recorder tests put stand-ins named sox first on PATH). */
export const SOX_PATH = execFileSync('sh', ['-c', 'command -v sox']).toString().trim();

export function sox(args: string[]): Buffer {
  return execFileSync(SOX_PATH, args, { maxBuffer: 1 << 28, stdio: ['ignore', 'pipe', 'pipe'] });
}

/** sox's own decoding of a file (any format sox reads) to interleaved 32-bit float. */
export function soxDecode(file: string, inputFormat: string[] = []): Float32Array {
  const out = sox([...inputFormat, file, '-t', 'raw', '-e', 'floating-point', '-b', '32', '-']);
  return new Float32Array(out.buffer.slice(out.byteOffset, out.byteOffset + out.byteLength));
}

/** One synth spec per channel, so that every channel carries a different signal. */
export function synthSpecs(channels: number): string[] {
  const kinds = ['sine 311', 'whitenoise', 'square 97', 'sine 1303', 'triangle 211', 'pinknoise', 'sawtooth 53', 'brownnoise'];
  return Array.from({ length: channels }, (_, c) => kinds[c % kinds.length]!.split(' ')).flat();
}

export function tempDir(prefix: string): { dir: string; remove: () => void } {
  const dir = mkdtempSync(join(tmpdir(), `bearline-${prefix}-`));
  return { dir, remove: () => rmSync(dir, { recursive: true, force: true }) };
}

/** Read a whole source into interleaved floats, recording each block's length. */
export async function drain(src: AudioSource): Promise<{ samples: Float32Array; blockLengths: number[] }> {
  const parts: Float32Array[] = [];
  const blockLengths: number[] = [];
  const C = src.format.channels;
  for await (const b of src.blocks()) {
    blockLengths.push(b.length);
    const part = new Float32Array(b.length * C);
    for (let c = 0; c < C; c++) for (let i = 0; i < b.length; i++) part[i * C + c] = b.channels[c]![i]!;
    parts.push(part);
  }
  const samples = new Float32Array(parts.reduce((n, p) => n + p.length, 0));
  let o = 0;
  for (const p of parts) {
    samples.set(p, o);
    o += p.length;
  }
  return { samples, blockLengths };
}

/** Largest absolute difference between two equally long arrays (Infinity when the lengths differ). */
export function maxAbsDiff(a: Float32Array, b: Float32Array): number {
  if (a.length !== b.length) return Infinity;
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i]! - b[i]!));
  return m;
}

/** Reading test audio back: a source's blocks as interleaved samples, and how far two signals differ. */
import type { AudioSource } from '../../src/sources/audio-source.js';

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

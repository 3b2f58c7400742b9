import { UsageError } from './errors.js';

const UNITS: Record<string, number> = { '': 1, K: 1024, M: 1024 ** 2, G: 1024 ** 3, T: 1024 ** 4 };

/**
 * Parse a byte size such as '500M', '2G', '64k', '1.5GiB' or '4096'. Units are powers of 1024
 * (K, M, G, T, optionally followed by 'B' or 'iB'); a bare number is bytes.
 */
export function parseByteSize(text: string, what = 'size'): number {
  const m = /^\s*(\d+(?:\.\d+)?)\s*([kKmMgGtT]?)(?:i?[bB])?\s*$/.exec(text);
  if (!m) throw new UsageError(`${what} '${text}' is not a size; write it like 500M, 2G or 65536`);
  const bytes = Math.round(Number(m[1]) * UNITS[m[2]!.toUpperCase()]!);
  if (!Number.isSafeInteger(bytes)) throw new UsageError(`${what} '${text}' is too large`);
  return bytes;
}

/** Short human form: 1536 -> '1.5 KiB'. */
export function formatByteSize(bytes: number): string {
  const steps = ['B', 'KiB', 'MiB', 'GiB', 'TiB'];
  let v = bytes;
  let i = 0;
  while (Math.abs(v) >= 1024 && i < steps.length - 1) {
    v /= 1024;
    i++;
  }
  return i === 0 ? `${v} B` : `${v.toFixed(1)} ${steps[i]}`;
}

/**
 * UTC times as seconds since 1970 without losing sub-millisecond digits (Date keeps only
 * milliseconds; arrival-time differences need better).
 */

const ISO_UTC = /^(\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2})(\.\d+)?(Z|[+-]\d{2}:\d{2})$/;

/** Parse an ISO 8601 time with a zone ("Z" or +hh:mm) to seconds since 1970; null if malformed. */
export function parseUtcSeconds(text: string): number | null {
  const m = ISO_UTC.exec(text.trim());
  if (!m) return null;
  const whole = Date.parse(`${m[1]}${m[3]}`);
  if (!Number.isFinite(whole)) return null;
  const frac = m[2] ? Number(`0${m[2]}`) : 0;
  return whole / 1000 + frac;
}

/** Seconds since 1970 -> ISO 8601 UTC with milliseconds. */
export function formatUtc(seconds: number): string {
  return new Date(Math.round(seconds * 1000)).toISOString();
}

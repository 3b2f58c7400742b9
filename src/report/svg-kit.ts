/**
 * Small pieces the report's pictures share: escaping, short numbers, the track colours, and
 * the time axis (UTC clock times or stream time). Pure.
 */

export function esc(text: string): string {
  return text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}

/** A coordinate with at most one decimal (SVG size stays small). */
export function px(v: number): string {
  return String(Math.round(v * 10) / 10);
}

/**
 * Track colours (this project's own set): twelve hues that stay apart on white and in the
 * grey of a printout, then a neutral grey for "other tracks".
 */
export const SERIES_COLOURS = ['#0f8b8d', '#e07a1f', '#5b4fc9', '#c4306a', '#4f9a28', '#a87a00', '#2a6fcb', '#8c4a2f', '#a143c8', '#16a085', '#d6452f', '#4d6b7a'];
export const OTHER_COLOUR = '#9aa0a6';
export const GAP_FILL = '#d9534f';

export function seriesColour(i: number, other: boolean): string {
  return other ? OTHER_COLOUR : SERIES_COLOURS[i % SERIES_COLOURS.length]!;
}

function pad2(n: number): string {
  return String(n).padStart(2, '0');
}

/** A time for tables and titles: '2026-05-01 21:03:04 UTC' or stream time '1:02:03.4' / '12.3 s'. */
export function formatTime(s: number, absolute: boolean): string {
  if (absolute) return new Date(Math.round(s * 1000)).toISOString().replace('T', ' ').replace(/\.\d{3}Z$/, ' UTC');
  if (s < 60) return `${s.toFixed(1)} s`;
  const h = Math.floor(s / 3600);
  const m = Math.floor((s % 3600) / 60);
  const sec = s % 60;
  return `${h}:${pad2(m)}:${sec.toFixed(1).padStart(4, '0')}`;
}

/** A length of time: '3 h 12 min', '4 min 5 s', '12.5 s'. */
export function formatDuration(s: number): string {
  if (s < 60) return `${s.toFixed(s < 10 ? 2 : 1)} s`;
  if (s < 3600) {
    const sec = Math.round(s);
    return `${Math.floor(sec / 60)} min ${sec % 60} s`;
  }
  if (s < 86400 * 2) {
    const min = Math.round(s / 60);
    return `${Math.floor(min / 60)} h ${min % 60} min`;
  }
  const h = Math.round(s / 3600);
  return `${Math.floor(h / 24)} d ${h % 24} h`;
}

const STEPS_S = [0.1, 0.2, 0.5, 1, 2, 5, 10, 15, 30, 60, 120, 300, 600, 900, 1800, 3600, 7200, 10800, 21600, 43200, 86400, 172800, 604800];

export interface Tick {
  readonly s: number;
  readonly label: string;
  /** A day boundary (UTC) or the first tick: drawn stronger, labelled with the date. */
  readonly major: boolean;
}

/** About `want` ticks over [startS, endS], on round clock times (UTC) or round stream times. */
export function timeTicks(startS: number, endS: number, absolute: boolean, want = 8): Tick[] {
  const span = endS - startS;
  const step = STEPS_S.find((s) => span / s <= want) ?? STEPS_S[STEPS_S.length - 1]!;
  const ticks: Tick[] = [];
  let lastDay = '';
  for (let s = Math.ceil(startS / step - 1e-9) * step; s <= endS + 1e-9; s += step) {
    if (absolute) {
      const iso = new Date(Math.round(s * 1000)).toISOString();
      const day = iso.slice(5, 10);
      const clock = step < 60 ? iso.slice(11, 19) : iso.slice(11, 16);
      const major = day !== lastDay;
      ticks.push({ s, label: major && step >= 3600 ? `${day} ${clock}` : major && ticks.length === 0 ? `${day} ${clock}` : clock, major });
      lastDay = day;
    } else {
      ticks.push({ s, label: step < 60 ? `${Number(s.toFixed(1))} s` : formatTime(s, false).replace(/\.\d$/, ''), major: false });
    }
  }
  return ticks;
}

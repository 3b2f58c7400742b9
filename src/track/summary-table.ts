/**
 * A plain-text table of the tracks of a run (for `scan --summary`): one row per confirmed
 * track, columns aligned, times as h:mm:ss.s from the start of the stream.
 */
import type { TrackSummary } from './types.js';

const HEADERS = ['track', 'events', 'azimuth', 'spread', 'elev', 'calling', 'first seen', 'last seen', 'state'] as const;

function clock(seconds: number): string {
  const tenths = Math.round(seconds * 10);
  const h = Math.floor(tenths / 36000);
  const m = Math.floor((tenths % 36000) / 600);
  const s = (tenths % 600) / 10;
  return `${h}:${String(m).padStart(2, '0')}:${s.toFixed(1).padStart(4, '0')}`;
}

function degrees(value: number | null): string {
  if (value === null || !Number.isFinite(value)) return '-';
  return `${value.toFixed(1)} deg`;
}

function row(t: TrackSummary): string[] {
  return [
    String(t.track),
    String(t.events),
    degrees(t.azimuthDeg),
    degrees(t.spreadDeg),
    degrees(t.elevationDeg),
    `${t.activeS.toFixed(1)} s`,
    clock(t.firstSeenS),
    clock(t.lastSeenS),
    t.alive ? 'live' : 'ended',
  ];
}

/** Render the summary; an empty one says so in one line. */
export function formatSummaryTable(summary: readonly TrackSummary[]): string {
  if (summary.length === 0) return 'no source tracks were confirmed\n';
  const rows: string[][] = [HEADERS.slice(), ...summary.map(row)];
  const widths = HEADERS.map((_, c) => Math.max(...rows.map((r) => r[c]!.length)));
  const lines = rows.map((r) => r.map((cell, c) => (c === r.length - 1 ? cell : cell.padStart(widths[c]!))).join('  ').trimEnd());
  const totalEvents = summary.reduce((n, t) => n + t.events, 0);
  lines.push(`${summary.length} track${summary.length === 1 ? '' : 's'}, ${totalEvents} event${totalEvents === 1 ? '' : 's'}; calling = total event time; spread = circular standard deviation of the track's hop azimuths`);
  const mirrored = summary.find((t) => t.mirrorAxisDeg !== null);
  if (mirrored !== undefined) {
    const axis = mirrored.mirrorAxisDeg!;
    const image = axis === 90 ? '180 - azimuth' : axis === 0 ? '-azimuth' : `${2 * axis} - azimuth`;
    lines.push(`${mirrored.mirror} mirror: each azimuth may equally be its mirror image across the array's axis at ${axis} deg (${image})`);
  } else if (summary.some((t) => t.mirror === 'up-down')) {
    lines.push("up-down mirror: each elevation may equally be its mirror image across the array's plane (the upper one is given)");
  }
  return lines.join('\n') + '\n';
}

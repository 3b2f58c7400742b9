/**
 * What a user can set for `bearline report`: the options object and one spec per option
 * (src/options/option-spec.ts), plus the readers of the time bounds and the track list.
 */
import { UsageError } from '../util/errors.js';
import { parseUtcSeconds } from '../locate/time.js';
import { textOption, type OptionSpec } from '../options/option-spec.js';

export interface ReportOptions {
  /** The HTML file to write. */
  readonly out: string | null;
  /** Leave out everything before this time: ISO 8601 UTC, or seconds of stream time for logs without utc. */
  readonly from: string | null;
  /** Leave out everything after this time (same forms as from). */
  readonly to: string | null;
  /** Only these track ids ("1,3,7"). */
  readonly tracks: string | null;
  /** Heading of the page. */
  readonly title: string | null;
}

/** A bound of the time range: UTC seconds since 1970, or seconds of stream time. */
export interface TimeBound {
  readonly absolute: boolean;
  readonly s: number;
}

/** '2026-05-01T21:00Z' (seconds optional) -> '2026-05-01T21:00:00Z' for the UTC reader. */
function withSeconds(text: string): string {
  return text.replace(/^(\d{4}-\d{2}-\d{2}T\d{2}:\d{2})(Z|[+-]\d{2}:\d{2})$/, '$1:00$2');
}

export function parseTimeBound(text: string): TimeBound | null {
  const t = text.trim();
  if (/^\d+(\.\d+)?$/.test(t)) return { absolute: false, s: Number(t) };
  const utc = parseUtcSeconds(withSeconds(t));
  return utc === null ? null : { absolute: true, s: utc };
}

function timeProblem(text: string): string | null {
  return parseTimeBound(text) === null ? 'is not a time' : null;
}

/** '1,3, 7' -> [1, 3, 7]; null when it is not a list of whole numbers. */
export function parseTrackList(text: string): number[] | null {
  const parts = text.split(',').map((p) => p.trim());
  if (parts.some((p) => !/^\d{1,9}$/.test(p))) return null;
  return [...new Set(parts.map(Number))];
}

function tracksProblem(text: string): string | null {
  return parseTrackList(text) === null ? 'is not a list of track ids' : null;
}

export const reportOptionSpecs: readonly OptionSpec<keyof ReportOptions>[] = [
  textOption('out', 'out', 'file.html', null, 'the HTML file to write (written aside and renamed over FILE when complete); required', { short: 'o' }),
  textOption('from', 'from', 'time', null, "leave out what came before: a UTC time like 2026-05-01T21:00Z, or seconds of stream time for logs without utc", {
    defaultText: 'the first record',
    check: timeProblem,
  }),
  textOption('to', 'to', 'time', null, 'leave out what came after (same forms as --from)', { defaultText: 'the last record', check: timeProblem }),
  textOption('tracks', 'tracks', 'ids', null, 'only these tracks, ids separated by commas (e.g. 1,3,7)', { defaultText: 'all', check: tracksProblem }),
  textOption('title', 'title', 'text', null, 'heading of the page', { defaultText: 'the station and the span' }),
];

/** The time range and track choice the report core takes, read from the options. */
export interface ReportSelection {
  readonly from: TimeBound | null;
  readonly to: TimeBound | null;
  /** null: every track. */
  readonly tracks: ReadonlySet<number> | null;
}

export function selectionOf(o: ReportOptions): ReportSelection {
  const from = o.from === null ? null : parseTimeBound(o.from);
  const to = o.to === null ? null : parseTimeBound(o.to);
  if (from && to) {
    if (from.absolute !== to.absolute) throw new UsageError(`--from ${o.from} and --to ${o.to}: give both as UTC times or both as seconds of stream time`);
    if (to.s <= from.s) throw new UsageError(`--to ${o.to} is not after --from ${o.from}; give a later --to`);
  }
  const list = o.tracks === null ? null : parseTrackList(o.tracks);
  return { from, to, tracks: list === null ? null : new Set(list) };
}

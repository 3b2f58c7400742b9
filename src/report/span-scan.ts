/**
 * The report's first pass over the logs: what the selection holds (time span, calls per
 * track, whether every call has a compass bearing, the stations) without keeping any call.
 * The second pass (night-bins.ts) bins the calls on the span found here. Pure.
 */
import { UsageError } from '../util/errors.js';
import type { LogItem } from './log-records.js';
import type { ReportSelection } from './report-options.js';

/** Most station names listed (a log of a whole fleet lists the first ones and a count). */
const MAX_STATIONS = 32;

export class SpanScan {
  /** null until the first record: whether times are UTC (true) or stream seconds (false). */
  absolute: boolean | null = null;
  minS = Infinity;
  maxS = -Infinity;
  calls = 0;
  gaps = 0;
  /** Calls per track id. */
  readonly trackCalls = new Map<number, number>();
  /** Every call of the selection carries bearing_deg. */
  allBearing = true;
  anyElevation = false;
  readonly stations = new Set<string>();
  stationsOver = false;
  /** Calls per mirror ambiguity named in the records (at most a few kinds exist). */
  readonly mirrors = new Map<string, number>();
  /** Lowest and highest band edge over the calls, Hz. */
  bandLoHz = Infinity;
  bandHiHz = -Infinity;
  confidenceSum = 0;

  constructor(private readonly sel: ReportSelection) {}

  /** Whether a call is in the selection (time range and tracks). */
  takes(timeS: number, track: number): boolean {
    if (this.sel.tracks && !this.sel.tracks.has(track)) return false;
    if (this.sel.from && timeS < this.sel.from.s) return false;
    if (this.sel.to && timeS > this.sel.to.s) return false;
    return true;
  }

  /** A gap clipped to the selected range, or null when none of it is in it. */
  clipGap(startS: number, endS: number): [number, number] | null {
    const a = this.sel.from ? Math.max(startS, this.sel.from.s) : startS;
    const b = this.sel.to ? Math.min(endS, this.sel.to.s) : endS;
    return b > a || (b === a && startS === endS) ? [a, b] : null;
  }

  /** `where` names the file for messages. */
  add(item: LogItem, where: string, station: string | null): void {
    if (this.absolute === null) this.absolute = item.absolute;
    else if (this.absolute !== item.absolute) {
      throw new UsageError(
        `${where}: records with utc and records without it cannot share one time axis (stream times of separate runs have no common clock); report them separately`,
      );
    }
    for (const b of [this.sel.from, this.sel.to]) {
      if (b && b.absolute !== item.absolute) {
        throw new UsageError(
          item.absolute
            ? `the logs carry UTC times (utc): give --from/--to as UTC times like 2026-05-01T21:00Z`
            : `the logs carry stream times only (no utc): give --from/--to in seconds from the start of the stream`,
        );
      }
    }
    if (item.kind === 'gap') {
      const g = this.clipGap(item.startS, item.endS);
      if (g === null) return;
      this.gaps++;
      this.minS = Math.min(this.minS, g[0]);
      this.maxS = Math.max(this.maxS, g[1]);
      return;
    }
    if (!this.takes(item.timeS, item.track)) return;
    this.calls++;
    this.trackCalls.set(item.track, (this.trackCalls.get(item.track) ?? 0) + 1);
    this.minS = Math.min(this.minS, item.timeS);
    this.maxS = Math.max(this.maxS, item.timeS + item.durationS);
    if (item.bearingDeg === null) this.allBearing = false;
    if (item.elevationDeg !== null) this.anyElevation = true;
    if (item.mirror !== null && (this.mirrors.has(item.mirror) || this.mirrors.size < 8)) this.mirrors.set(item.mirror, (this.mirrors.get(item.mirror) ?? 0) + 1);
    if (item.bandHz !== null) {
      this.bandLoHz = Math.min(this.bandLoHz, item.bandHz[0]);
      this.bandHiHz = Math.max(this.bandHiHz, item.bandHz[1]);
    }
    this.confidenceSum += item.confidence;
    const st = item.station ?? station;
    if (st !== null && !this.stations.has(st)) {
      if (this.stations.size < MAX_STATIONS) this.stations.add(st);
      else this.stationsOver = true;
    }
  }

  /** The span the plots cover: --from/--to where given, else the records' own. */
  span(): { startS: number; endS: number } {
    let startS = this.sel.from?.s ?? this.minS;
    let endS = this.sel.to?.s ?? this.maxS;
    if (!Number.isFinite(startS) || !Number.isFinite(endS)) return { startS: 0, endS: 1 };
    if (endS - startS < 1) {
      const mid = (startS + endS) / 2;
      startS = Math.min(startS, mid - 0.5);
      endS = Math.max(endS, mid + 0.5);
    }
    return { startS, endS };
  }

  /** Track ids by calls, most first (ties: lower id first). */
  tracksByCalls(): number[] {
    return [...this.trackCalls].sort((a, b) => b[1] - a[1] || a[0] - b[0]).map(([id]) => id);
  }
}

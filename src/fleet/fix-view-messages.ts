/**
 * Messages of the live fix view (web-viewer/fixes/, at /feed of `locate --serve`). Server to
 * page, each one JSON text with a `type`: hello (stations in local metres, once), station
 * (online or offline), call (one station's bearing, for its ray), fix (a fix or its revision,
 * same id), status (the counters), snapshot (all of the above that a page that joins late needs;
 * sent to every page, where it is harmless). Pure: builds texts, no I/O.
 */
import type { LiveCounts, LiveFix } from '../locate/live-locator.js';
import { type PlotFix, plotFixOf, plotStationsOf } from '../locate/output.js';
import type { PlacedStations } from '../locate/stations.js';

export const FIX_VIEW_PROTOCOL = 1;

export interface FixViewHello {
  type: 'hello';
  view: 'fixes';
  protocol: typeof FIX_VIEW_PROTOCOL;
  origin: { lat_deg: number; lon_deg: number; alt_m: number } | null;
  stations: { id: string; east_m: number; north_m: number; heading_deg: number | null }[];
}

export interface FixViewFix extends PlotFix {
  type: 'fix';
  id: string;
  revision: number;
  backfill: boolean;
  utc: string | null;
}

export interface FixViewCall {
  type: 'call';
  station: string;
  bearing_deg: number;
  utc: string | null;
}

export function helloOf(placed: PlacedStations): FixViewHello {
  return {
    type: 'hello',
    view: 'fixes',
    protocol: FIX_VIEW_PROTOCOL,
    origin: placed.frame === null ? null : { ...placed.frame.origin },
    stations: plotStationsOf(placed),
  };
}

/** The view of a fix; null when it has no position (a revision that lost it is shown as gone). */
export function fixViewOf(f: LiveFix, placed: PlacedStations): FixViewFix | null {
  const p = plotFixOf(f.call, placed);
  return p === null ? null : { type: 'fix', id: f.id, revision: f.revision, backfill: f.backfill, utc: f.call.utc, ...p };
}

export function stationMessage(id: string, online: boolean): string {
  return JSON.stringify({ type: 'station', id, online });
}

export function statusMessage(counts: LiveCounts): string {
  return JSON.stringify({ type: 'status', ...counts });
}

export function snapshotMessage(stations: Record<string, boolean | null>, fixes: readonly FixViewFix[], calls: readonly FixViewCall[], counts: LiveCounts): string {
  return JSON.stringify({ type: 'snapshot', stations, fixes, calls, status: counts });
}

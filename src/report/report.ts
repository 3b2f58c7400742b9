/**
 * `bearline report`: event logs to one HTML page. Two passes over the files, each a stream:
 * the first finds the span, the tracks and the angle to plot (span-scan.ts), the second bins
 * every call on that span (night-bins.ts); memory holds the bins, never the calls.
 */
import { UsageError } from '../util/errors.js';
import { readLogItems, type LogInput } from './log-input.js';
import { NightBins } from './night-bins.js';
import { reportHtml } from './report-page.js';
import { selectionOf, type ReportOptions } from './report-options.js';
import { formatTime } from './svg-kit.js';
import { SpanScan } from './span-scan.js';

export interface ReportHooks {
  /** Bytes read so far, over both passes (2 x the files' size in all). */
  onBytes?: (done: number) => void;
  onWarning?: (message: string) => void;
  /** The time written in the page (default: now). */
  now?: () => Date;
  version?: string;
}

export interface ReportResult {
  readonly html: string;
  readonly calls: number;
  readonly tracks: number;
  readonly gaps: number;
  readonly drawnPoints: number;
  readonly bins: NightBins;
}

function selectionText(o: ReportOptions): string {
  const parts: string[] = [];
  if (o.from !== null) parts.push(`--from ${o.from}`);
  if (o.to !== null) parts.push(`--to ${o.to}`);
  if (o.tracks !== null) parts.push(`--tracks ${o.tracks}`);
  return parts.join(' ');
}

export async function buildReport(inputs: readonly LogInput[], options: ReportOptions, hooks: ReportHooks = {}): Promise<ReportResult> {
  const sel = selectionOf(options);
  let bytes = 0;
  const onBytes = (n: number): void => {
    bytes += n;
    hooks.onBytes?.(bytes);
  };
  const warnings: string[] = [];
  const warn = (m: string): void => {
    if (!warnings.includes(m)) {
      warnings.push(m);
      hooks.onWarning?.(m);
    }
  };

  const scan = new SpanScan(sel);
  let records = 0;
  let callsRead = 0;
  const trackIdsRead = new Set<number>();
  for (const input of inputs) {
    await readLogItems(
      input,
      (item) => {
        records++;
        if (item.kind === 'call') {
          callsRead++;
          if (trackIdsRead.size < 1000) trackIdsRead.add(item.track);
        }
        scan.add(item, input.path, input.station);
      },
      onBytes,
      warn,
    );
  }
  if (records === 0) throw new UsageError(`no event or gap records in ${inputs.map((i) => i.path).join(', ')}; give the events log of a scan or a station`);
  if (scan.calls === 0 && callsRead > 0 && selectionText(options) !== '') {
    const ids = [...trackIdsRead].sort((a, b) => a - b).slice(0, 20);
    throw new UsageError(
      `${selectionText(options)} leaves none of the ${callsRead} calls; the logs hold tracks ${ids.join(', ')}${trackIdsRead.size > 20 ? ', ...' : ''}` +
        ` and run from ${formatTime(scan.minS, scan.absolute ?? false)}: widen the range or choose other tracks`,
    );
  }

  const { startS, endS } = scan.span();
  const bins = new NightBins(startS, endS, scan.absolute ?? false, scan.tracksByCalls(), scan.allBearing && scan.calls > 0 ? 'bearing' : 'azimuth');
  for (const input of inputs) {
    await readLogItems(
      input,
      (item) => {
        if (item.kind === 'gap') {
          const g = scan.clipGap(item.startS, item.endS);
          if (g) bins.addGap(g[0], g[1], item.reason);
        } else if (scan.takes(item.timeS, item.track)) bins.addCall(item);
      },
      onBytes,
      () => undefined,
    );
  }
  const html = reportHtml(bins, {
    title: options.title,
    stations: [...scan.stations],
    moreStations: scan.stationsOver,
    files: inputs.map((i) => ({ path: i.path, size: i.size })),
    bytes: inputs.reduce((n, i) => n + i.size, 0),
    callsRead,
    selection: selectionText(options),
    anyElevation: scan.anyElevation,
    warnings,
    mirrors: scan.mirrors,
    band: Number.isFinite(scan.bandLoHz) ? [scan.bandLoHz, scan.bandHiHz] : null,
    meanConfidence: scan.calls > 0 ? scan.confidenceSum / scan.calls : null,
    generatedUtc: (hooks.now?.() ?? new Date()).toISOString().replace(/\.\d{3}Z$/, 'Z'),
    version: hooks.version ?? '',
  });
  let drawn = 0;
  for (let s = 0; s < bins.seriesCount; s++) drawn += bins.points(s).length;
  return { html, calls: bins.calls, tracks: bins.tracks.size, gaps: bins.gapCount, drawnPoints: drawn, bins };
}

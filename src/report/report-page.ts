/**
 * The report as one self-contained HTML page: its style inline, the pictures as inline SVG,
 * no script and no reference to anything outside the file. The track table, the station's
 * details and the page around the pictures live here. Pure.
 */
import { MAX_SERIES, type NightBins } from './night-bins.js';
import { ratePlotSvg } from './rate-plot.js';
import { rosePlotSvg } from './rose-plot.js';
import { esc, formatDuration, formatTime, seriesColour } from './svg-kit.js';
import { timePlotSvg } from './time-plot.js';

/** Rows of the track table beyond which the rest are summed in one line. */
const MAX_TABLE_ROWS = 200;

export interface ReportFacts {
  readonly title: string | null;
  readonly stations: readonly string[];
  readonly moreStations: boolean;
  readonly files: readonly { path: string; size: number }[];
  readonly bytes: number;
  /** Calls in the logs, before --from/--to/--tracks. */
  readonly callsRead: number;
  readonly selection: string;
  readonly anyElevation: boolean;
  readonly warnings: readonly string[];
  /** Calls per mirror ambiguity the records name. */
  readonly mirrors: ReadonlyMap<string, number>;
  /** The calls' band edges, Hz (null when no record has a band). */
  readonly band: readonly [number, number] | null;
  readonly meanConfidence: number | null;
  readonly generatedUtc: string;
  readonly version: string;
}

const STYLE = `
body{font:15px/1.45 system-ui,-apple-system,"Segoe UI",Roboto,sans-serif;color:#1f2328;margin:0;background:#f6f7f9}
main{max-width:1140px;margin:0 auto;padding:18px}
h1{font-size:24px;margin:4px 0 2px}h2{font-size:18px;margin:26px 0 8px}
.sub{color:#57606a;margin:0 0 12px}
section{background:#fff;border:1px solid #dfe3e8;border-radius:8px;padding:12px 14px;margin:12px 0}
svg.plot{width:100%;height:auto;display:block}
#rose-plot{max-width:440px;margin:0 auto}
.legend{display:flex;flex-wrap:wrap;gap:6px 16px;margin:6px 0 2px;font-size:14px}
.sw{display:inline-block;width:12px;height:12px;border-radius:50%;margin-right:5px;vertical-align:-1px}
.gapkey{display:inline-block;width:16px;height:12px;background:rgba(217,83,79,.25);margin-right:5px;vertical-align:-1px}
table{border-collapse:collapse;width:100%;font-size:14px}
th,td{text-align:right;padding:4px 8px;border-bottom:1px solid #eceff2;white-space:nowrap}
th:first-child,td:first-child{text-align:left}
.wrap{overflow-x:auto}
dl{display:grid;grid-template-columns:max-content 1fr;gap:3px 14px;margin:0}dt{color:#57606a}dd{margin:0}
.note{color:#57606a;font-size:13px}
.warn{color:#8a4b00}
`;

function trackLabel(bins: NightBins, s: number): string {
  if (bins.hasOther && s === bins.seriesCount - 1) return 'other';
  for (const [id, i] of bins.seriesOf) if (i === s) return String(id);
  return '?';
}

function angleText(a: number, kind: 'bearing' | 'azimuth'): string {
  return Number.isFinite(a) ? `${(kind === 'bearing' ? (a + 360) % 360 : a).toFixed(1)}°` : '—';
}

function trackTable(bins: NightBins, anyElevation: boolean): string {
  const rows = [...bins.tracks.values()].sort((a, b) => b.calls - a.calls || a.id - b.id);
  const angleHead = bins.angle === 'bearing' ? 'mean bearing' : 'mean azimuth';
  const head = `<tr><th>track</th><th>calls</th><th>first</th><th>last</th><th>${angleHead}</th><th>spread</th><th>mean confidence</th>${anyElevation ? '<th>mean elevation</th>' : ''}</tr>`;
  const body = rows.slice(0, MAX_TABLE_ROWS).map((t) => {
    const s = bins.seriesOf.get(t.id);
    const colour = seriesColour(s ?? 0, s === undefined);
    const spread = t.angles.stdDeg();
    const elev = t.elevationCount > 0 ? `${(t.elevationSum / t.elevationCount).toFixed(1)}°` : '—';
    return (
      `<tr data-track="${t.id}" data-calls="${t.calls}" data-mean="${Number(t.angles.meanDeg().toFixed(2))}"><td><span class="sw" style="background:${colour}"></span>${t.id}</td>` +
      `<td>${t.calls}</td><td>${esc(formatTime(t.firstS, bins.absolute))}</td><td>${esc(formatTime(t.lastS, bins.absolute))}</td>` +
      `<td>${angleText(t.angles.meanDeg(), bins.angle)}</td><td>${Number.isFinite(spread) ? `${spread.toFixed(1)}°` : '—'}</td>` +
      `<td>${(t.confidenceSum / t.calls).toFixed(2)}</td>${anyElevation ? `<td>${elev}</td>` : ''}</tr>`
    );
  });
  if (rows.length > MAX_TABLE_ROWS) {
    const rest = rows.slice(MAX_TABLE_ROWS);
    body.push(`<tr><td colspan="2">${rest.length} more tracks, ${rest.reduce((n, t) => n + t.calls, 0)} calls</td></tr>`);
  }
  return `<div class="wrap"><table id="track-table">${head}${body.join('')}</table></div>`;
}

function legend(bins: NightBins, labels: readonly string[]): string {
  const items = labels.map((label, s) => {
    const other = bins.hasOther && s === bins.seriesCount - 1;
    return `<span><span class="sw" style="background:${seriesColour(s, other)}"></span>${other ? `other tracks` : `track ${esc(label)}`}</span>`;
  });
  if (bins.gapCount > 0) items.push(`<span><span class="gapkey"></span>capture lost</span>`);
  return `<div class="legend">${items.join('')}</div>`;
}

export function reportHtml(bins: NightBins, facts: ReportFacts): string {
  const labels = Array.from({ length: bins.seriesCount }, (_, s) => trackLabel(bins, s));
  const span = `${formatTime(bins.startS, bins.absolute)} to ${formatTime(bins.endS, bins.absolute)}`;
  const station = facts.stations.length > 0 ? facts.stations.join(', ') + (facts.moreStations ? ', …' : '') : 'not named in the logs';
  const title = facts.title ?? `${facts.stations.length === 1 ? facts.stations[0] : 'bearline'}: calls from ${span}`;
  const drawn = labels.reduce((n, _, s) => n + bins.points(s).length, 0);
  const angleWord = bins.angle === 'bearing' ? 'compass bearing (bearing_deg)' : 'azimuth in the array frame (azimuth_deg; the logs carry no bearing_deg: give the array a heading_deg for compass bearings)';
  const gaps =
    bins.gapCount === 0
      ? 'none recorded'
      : `${bins.gapCount} (${formatDuration(bins.lostTotalS)} lost: ${[...bins.gapReasons].map(([r, n]) => `${n} ${esc(r)}`).join(', ')})`;
  const files = facts.files.slice(0, 12).map((f) => esc(f.path)).join('<br>') + (facts.files.length > 12 ? `<br>… and ${facts.files.length - 12} more` : '');
  return `<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width,initial-scale=1">
<title>${esc(title)}</title><style>${STYLE}</style></head>
<body><main>
<h1>${esc(title)}</h1>
<p class="sub">${bins.calls} calls on ${bins.tracks.size} tracks · ${esc(formatDuration(bins.endS - bins.startS))} · ${bins.absolute ? 'times in UTC' : 'times from the start of the stream'}</p>
${facts.warnings.map((w) => `<p class="warn">${esc(w)}</p>`).join('\n')}
<section><h2>Where the calls came from, over time</h2>
${legend(bins, labels)}
${timePlotSvg(bins, labels)}
<p class="note">One dot per call (${drawn} of ${bins.calls} drawn: at most two per track in each 1/720 of the span, a fair sample where calls are denser). ${bins.tracks.size > MAX_SERIES ? `The ${MAX_SERIES} tracks with the most calls have their own colour; the rest are grey. ` : ''}Shaded: capture lost.</p></section>
<section><h2>Directions per track</h2>
${rosePlotSvg(bins, labels)}
<p class="note">Calls per 10° sector, tracks stacked outwards; the radius grows with the square root of the count, so areas compare. ${bins.angle === 'bearing' ? 'North up, clockwise.' : "The array's front up, clockwise (right at 90°)."}</p></section>
<section><h2>Calls over time</h2>
${ratePlotSvg(bins, labels)}</section>
<section><h2>Tracks</h2>
${trackTable(bins, facts.anyElevation)}
<p class="note">Spread: circular standard deviation sqrt(−2 ln R) of the track's ${bins.angle === 'bearing' ? 'bearings' : 'azimuths'} (Mardia and Jupp, Directional Statistics, 2000). A track id belongs to one run of the station: after a restart the same id can be another source.</p></section>
<section><h2>Station</h2><dl>
<dt>station</dt><dd>${esc(station)}</dd>
<dt>span</dt><dd>${esc(span)} (${esc(formatDuration(bins.endS - bins.startS))})</dd>
<dt>angle</dt><dd>${angleWord}</dd>
<dt>calls</dt><dd>${bins.calls} shown of ${facts.callsRead} in the logs${facts.selection === '' ? '' : ` (${esc(facts.selection)})`}</dd>
<dt>capture gaps</dt><dd>${gaps}</dd>
${facts.band ? `<dt>call bands</dt><dd>${Math.round(facts.band[0])} Hz to ${Math.round(facts.band[1])} Hz</dd>` : ''}
${facts.meanConfidence !== null ? `<dt>confidence</dt><dd>${facts.meanConfidence.toFixed(2)} on average</dd>` : ''}
${facts.mirrors.size > 0 ? `<dt>ambiguity</dt><dd>${[...facts.mirrors].map(([m, n]) => `${n} calls with the ${esc(m)} mirror (the array cannot tell a direction from its mirror image)`).join('; ')}</dd>` : ''}
<dt>logs</dt><dd>${facts.files.length} files, ${(facts.bytes / 1e6).toFixed(1)} MB<br>${files}</dd>
<dt>made</dt><dd>${esc(facts.generatedUtc)} by bearline ${esc(facts.version)} report</dd>
</dl></section>
</main></body></html>
`;
}

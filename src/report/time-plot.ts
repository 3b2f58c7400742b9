/**
 * The bearing-against-time picture of the whole span: one dot per kept call (night-bins.ts
 * keeps a bounded sample per time bin), coloured by track, lost capture shaded. Each dot
 * carries its call's time and angle (data-t, data-a) and its group the track (data-track), so
 * the picture can be read back. Pure: bins in, SVG text out.
 */
import type { NightBins } from './night-bins.js';
import { TIME_BINS } from './night-bins.js';
import { esc, formatDuration, GAP_FILL, px, seriesColour, timeTicks } from './svg-kit.js';

const W = 1100;
const H = 380;
const L = 70;
const R = 34;
const T = 14;
const B = 44;

/** Angle gridlines and their labels: compass for bearings, array frame for azimuths. */
function angleGrid(bins: NightBins): { a: number; label: string }[] {
  return bins.angle === 'bearing'
    ? [
        { a: 0, label: '0° N' },
        { a: 90, label: '90° E' },
        { a: 180, label: '180° S' },
        { a: 270, label: '270° W' },
        { a: 360, label: '360° N' },
      ]
    : [
        { a: -180, label: '−180° back' },
        { a: -90, label: '−90° left' },
        { a: 0, label: '0° front' },
        { a: 90, label: '90° right' },
        { a: 180, label: '180° back' },
      ];
}

export function timePlotSvg(bins: NightBins, seriesLabels: readonly string[]): string {
  const x = (t: number): number => L + ((t - bins.startS) / (bins.endS - bins.startS)) * (W - L - R);
  const [lo, hi] = bins.angle === 'bearing' ? [0, 360] : [-180, 180];
  const y = (a: number): number => T + (1 - (a - lo) / (hi - lo)) * (H - T - B);
  const out: string[] = [];
  const what = bins.angle === 'bearing' ? 'bearing (compass)' : 'azimuth (array frame)';
  out.push(`<svg class="plot" id="time-plot" data-plot="time" data-angle="${bins.angle}" data-start="${bins.startS}" data-end="${bins.endS}" viewBox="0 0 ${W} ${H}" role="img" aria-label="${esc(what)} of every call against time">`);
  // Lost capture: one band per run of bins with a gap in them.
  out.push('<g class="gaps">');
  for (let i = 0; i < TIME_BINS; ) {
    if (bins.lostS[i]! <= 0) {
      i++;
      continue;
    }
    let j = i;
    let lost = 0;
    while (j < TIME_BINS && bins.lostS[j]! > 0) lost += bins.lostS[j++]!;
    const x0 = x(bins.startS + i * bins.binS);
    const x1 = Math.max(x0 + 2, x(bins.startS + j * bins.binS));
    out.push(`<rect x="${px(x0)}" y="${T}" width="${px(x1 - x0)}" height="${H - T - B}" fill="${GAP_FILL}" fill-opacity="0.16" data-lost-s="${lost.toFixed(1)}"><title>capture lost: ${esc(formatDuration(lost))}</title></rect>`);
    i = j;
  }
  out.push('</g><g class="grid" stroke="#d5d9de" stroke-width="1" font-size="12" fill="#444">');
  for (const g of angleGrid(bins)) {
    out.push(`<line x1="${L}" x2="${W - R}" y1="${px(y(g.a))}" y2="${px(y(g.a))}"/><text x="${L - 6}" y="${px(y(g.a) + 4)}" text-anchor="end" stroke="none">${g.label}</text>`);
  }
  for (const t of timeTicks(bins.startS, bins.endS, bins.absolute, 9)) {
    const tx = px(x(t.s));
    out.push(`<line x1="${tx}" x2="${tx}" y1="${T}" y2="${H - B}"${t.major ? ' stroke="#aab1b9"' : ''}/><text x="${tx}" y="${H - B + 16}" text-anchor="middle" stroke="none">${esc(t.label)}</text>`);
  }
  out.push(`<text x="${(L + W - R) / 2}" y="${H - 6}" text-anchor="middle" stroke="none">${bins.absolute ? 'time (UTC)' : 'stream time'}</text>`);
  out.push('</g>');
  for (let s = 0; s < bins.seriesCount; s++) {
    const other = bins.hasOther && s === bins.seriesCount - 1;
    out.push(`<g class="series" data-track="${esc(seriesLabels[s]!)}" fill="${seriesColour(s, other)}">`);
    for (const p of bins.points(s)) {
      out.push(`<circle cx="${px(x(p.t))}" cy="${px(y(p.a))}" r="2.2" data-t="${Number(p.t.toFixed(3))}" data-a="${Number(p.a.toFixed(3))}"/>`);
    }
    out.push('</g>');
  }
  out.push(`<rect x="${L}" y="${T}" width="${W - L - R}" height="${H - T - B}" fill="none" stroke="#8a929b"/>`);
  out.push('</svg>');
  return out.join('\n');
}

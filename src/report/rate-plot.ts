/**
 * Calls per hour (per minute for spans under two hours): bars stacked by track. Pure.
 */
import type { NightBins } from './night-bins.js';
import { esc, formatTime, px, seriesColour, timeTicks } from './svg-kit.js';

const W = 1100;
const H = 230;
const L = 70;
const R = 34;
const T = 14;
const B = 40;

export function ratePlotSvg(bins: NightBins, seriesLabels: readonly string[]): string {
  const { rate } = bins;
  const totals = new Array<number>(rate.count).fill(0);
  for (let s = 0; s < bins.seriesCount; s++) for (let i = 0; i < rate.count; i++) totals[i]! += bins.rateCounts[s]![i]!;
  const max = Math.max(1, ...totals);
  const endS = rate.startS + rate.count * rate.widthS;
  const x = (t: number): number => L + ((t - rate.startS) / (endS - rate.startS)) * (W - L - R);
  const y = (n: number): number => H - B - (n / max) * (H - T - B);
  const unit =
    rate.widthS === 3600 ? 'hour' : rate.widthS === 60 ? 'minute' : rate.widthS > 3600 ? `${rate.widthS / 3600} hours` : rate.widthS > 60 ? `${rate.widthS / 60} minutes` : `${rate.widthS} s`;
  const out: string[] = [];
  out.push(`<svg class="plot" id="rate-plot" data-plot="rate" data-bin-s="${rate.widthS}" viewBox="0 0 ${W} ${H}" role="img" aria-label="calls per ${unit}">`);
  out.push('<g stroke="#d5d9de" font-size="12" fill="#444">');
  for (const f of [0, 0.5, 1]) {
    const n = Math.round(max * f);
    out.push(`<line x1="${L}" x2="${W - R}" y1="${px(y(n))}" y2="${px(y(n))}"/><text x="${L - 6}" y="${px(y(n) + 4)}" text-anchor="end" stroke="none">${n}</text>`);
  }
  for (const t of timeTicks(rate.startS, endS, bins.absolute, 9)) {
    out.push(`<text x="${px(x(t.s))}" y="${H - B + 16}" text-anchor="middle" stroke="none">${esc(t.label)}</text>`);
  }
  out.push(`<text x="${(L + W - R) / 2}" y="${H - 6}" text-anchor="middle" stroke="none">calls per ${unit}${bins.absolute ? ' (UTC)' : ' (stream time)'}</text></g>`);
  const barW = Math.max(1, (W - L - R) / rate.count - 1);
  const base = new Array<number>(rate.count).fill(0);
  for (let s = 0; s < bins.seriesCount; s++) {
    const other = bins.hasOther && s === bins.seriesCount - 1;
    out.push(`<g class="series" data-track="${esc(seriesLabels[s]!)}" fill="${seriesColour(s, other)}">`);
    for (let i = 0; i < rate.count; i++) {
      const n = bins.rateCounts[s]![i]!;
      if (n === 0) continue;
      const t0 = rate.startS + i * rate.widthS;
      out.push(
        `<rect x="${px(x(t0) + 0.5)}" y="${px(y(base[i]! + n))}" width="${px(barW)}" height="${px(y(base[i]!) - y(base[i]! + n))}" data-bin="${i}" data-count="${n}"><title>track ${esc(seriesLabels[s]!)}: ${n} calls from ${esc(formatTime(t0, bins.absolute))}</title></rect>`,
      );
      base[i]! += n;
    }
    out.push('</g>');
  }
  out.push('</svg>');
  return out.join('\n');
}

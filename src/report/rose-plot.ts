/**
 * The polar histogram of angles: calls per 10-degree sector, the tracks stacked outwards in
 * their colours, radius proportional to the square root of the count (so a sector's area, not
 * its length, grows with its calls). Up (0) is north for bearings, the array's front for
 * azimuths; angles grow clockwise. Pure: bins in, SVG text out.
 */
import { type NightBins, ROSE_SECTORS } from './night-bins.js';
import { esc, px, seriesColour } from './svg-kit.js';

const SIZE = 420;
const C = SIZE / 2;
const RMAX = C - 46;

function polar(angleDeg: number, r: number): [number, number] {
  const a = (angleDeg * Math.PI) / 180;
  return [C + r * Math.sin(a), C - r * Math.cos(a)];
}

function wedge(a0: number, a1: number, r0: number, r1: number): string {
  const [x0, y0] = polar(a0, r1);
  const [x1, y1] = polar(a1, r1);
  const [x2, y2] = polar(a1, r0);
  const [x3, y3] = polar(a0, r0);
  return `M${px(x0)} ${px(y0)}A${px(r1)} ${px(r1)} 0 0 1 ${px(x1)} ${px(y1)}L${px(x2)} ${px(y2)}` + (r0 > 0 ? `A${px(r0)} ${px(r0)} 0 0 0 ${px(x3)} ${px(y3)}Z` : 'Z');
}

export function rosePlotSvg(bins: NightBins, seriesLabels: readonly string[]): string {
  const width = 360 / ROSE_SECTORS;
  const totals = new Array<number>(ROSE_SECTORS).fill(0);
  for (let s = 0; s < bins.seriesCount; s++) for (let k = 0; k < ROSE_SECTORS; k++) totals[k]! += bins.rose[s]![k]!;
  const max = Math.max(1, ...totals);
  const r = (n: number): number => RMAX * Math.sqrt(n / max);
  const out: string[] = [];
  out.push(`<svg class="plot" id="rose-plot" data-plot="rose" data-angle="${bins.angle}" viewBox="0 0 ${SIZE} ${SIZE}" role="img" aria-label="calls per ${width}-degree sector of ${bins.angle}, by track">`);
  out.push('<g fill="none" stroke="#d5d9de">');
  for (const f of [0.25, 0.5, 1]) out.push(`<circle cx="${C}" cy="${C}" r="${px(r(max * f))}"/>`);
  for (let a = 0; a < 360; a += 30) {
    const [x, y] = polar(a, RMAX);
    out.push(`<line x1="${C}" y1="${C}" x2="${px(x)}" y2="${px(y)}"/>`);
  }
  out.push('</g>');
  const inner = new Array<number>(ROSE_SECTORS).fill(0);
  for (let s = 0; s < bins.seriesCount; s++) {
    const other = bins.hasOther && s === bins.seriesCount - 1;
    out.push(`<g class="series" data-track="${esc(seriesLabels[s]!)}" fill="${seriesColour(s, other)}" stroke="#fff" stroke-width="0.6">`);
    for (let k = 0; k < ROSE_SECTORS; k++) {
      const n = bins.rose[s]![k]!;
      if (n === 0) continue;
      const a0 = k * width;
      const path = wedge(a0, a0 + width, r(inner[k]!), r(inner[k]! + n));
      out.push(`<path d="${path}" data-sector="${a0}" data-count="${n}"><title>track ${esc(seriesLabels[s]!)}: ${n} calls at ${a0}–${a0 + width}°</title></path>`);
      inner[k]! += n;
    }
    out.push('</g>');
  }
  const labels = bins.angle === 'bearing' ? ['N', 'E', 'S', 'W'] : ['front', 'right', 'back', 'left'];
  out.push('<g font-size="13" fill="#333" text-anchor="middle">');
  labels.forEach((text, i) => {
    const [x, y] = polar(i * 90, RMAX + 22);
    out.push(`<text x="${px(x)}" y="${px(y + 5)}">${text}</text>`);
  });
  out.push(`<text x="${px(C + 4)}" y="${px(C - r(max) - 4)}" font-size="11" fill="#666" text-anchor="start">${max}</text>`);
  out.push('</g></svg>');
  return out.join('\n');
}

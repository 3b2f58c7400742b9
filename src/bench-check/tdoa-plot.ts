/**
 * An SVG picture of a bench fit: one panel per mic pair, measured delay against the delay the
 * file's geometry expects (dots), the fitted model (rings) and the line of agreement.
 * Hand-written SVG, no scripts; pure (a string out).
 */
import type { BenchFit } from './array-fit.js';

const PANEL = 260;
const PAD = 44;
const COLS = 3;

function esc(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}

function niceStep(span: number): number {
  const raw = span / 4;
  const p = 10 ** Math.floor(Math.log10(raw));
  for (const m of [1, 2, 5, 10]) if (m * p >= raw) return m * p;
  return 10 * p;
}

export function tdoaPlotSvg(fit: BenchFit, title: string): string {
  const P = fit.pairs.length;
  const cols = Math.min(COLS, P);
  const rows = Math.ceil(P / cols);
  const W = Math.max(cols * PANEL + 20, 640);
  const H = rows * PANEL + 60;
  const out: string[] = [];
  out.push(`<svg xmlns="http://www.w3.org/2000/svg" width="${W}" height="${H}" viewBox="0 0 ${W} ${H}" font-family="sans-serif" font-size="11">`);
  out.push(`<rect width="${W}" height="${H}" fill="white"/>`);
  out.push(`<text x="10" y="20" font-size="14">${esc(title)}</text>`);
  out.push(`<text x="10" y="38" fill="#555">measured tdoa (dots) and fitted model (rings) against the tdoa the file's geometry expects, microseconds</text>`);
  for (let p = 0; p < P; p++) {
    const [a, b] = fit.pairs[p]!;
    const ox = 10 + (p % cols) * PANEL;
    const oy = 50 + Math.floor(p / cols) * PANEL;
    const inner = PANEL - PAD - 12;
    const vals: number[] = [];
    for (const t of fit.takes) for (const v of [t.expectedS[p]!, t.measuredS[p]!, t.fittedS[p]!]) if (Number.isFinite(v)) vals.push(v * 1e6);
    let lo = Math.min(...vals, 0);
    let hi = Math.max(...vals, 0);
    if (!(hi > lo)) {
      lo -= 1;
      hi += 1;
    }
    const margin = (hi - lo) * 0.06;
    lo -= margin;
    hi += margin;
    const sx = (v: number): number => ox + PAD + ((v - lo) / (hi - lo)) * inner;
    const sy = (v: number): number => oy + 8 + inner - ((v - lo) / (hi - lo)) * inner;
    out.push(`<g>`);
    out.push(`<rect x="${ox + PAD}" y="${oy + 8}" width="${inner}" height="${inner}" fill="none" stroke="#999"/>`);
    const step = niceStep(hi - lo);
    for (let v = Math.ceil(lo / step) * step; v <= hi; v += step) {
      const x = sx(v).toFixed(1);
      const y = sy(v).toFixed(1);
      out.push(`<line x1="${x}" y1="${oy + 8}" x2="${x}" y2="${oy + 8 + inner}" stroke="#eee"/>`);
      out.push(`<line x1="${ox + PAD}" y1="${y}" x2="${ox + PAD + inner}" y2="${y}" stroke="#eee"/>`);
      out.push(`<text x="${x}" y="${oy + inner + 22}" text-anchor="middle" fill="#555">${Number(v.toPrecision(6))}</text>`);
      out.push(`<text x="${ox + PAD - 4}" y="${(Number(y) + 4).toFixed(1)}" text-anchor="end" fill="#555">${Number(v.toPrecision(6))}</text>`);
    }
    out.push(`<line x1="${sx(lo).toFixed(1)}" y1="${sy(lo).toFixed(1)}" x2="${sx(hi).toFixed(1)}" y2="${sy(hi).toFixed(1)}" stroke="#888" stroke-dasharray="4 3"/>`);
    for (const t of fit.takes) {
      const e = t.expectedS[p]! * 1e6;
      const m = t.measuredS[p]! * 1e6;
      const f = t.fittedS[p]! * 1e6;
      if (Number.isFinite(f)) out.push(`<circle cx="${sx(e).toFixed(1)}" cy="${sy(f).toFixed(1)}" r="5" fill="none" stroke="#d07000"/>`);
      if (Number.isFinite(m)) out.push(`<circle cx="${sx(e).toFixed(1)}" cy="${sy(m).toFixed(1)}" r="2.5" fill="#1060c0"><title>${esc(t.label)}: expected ${e.toFixed(2)} us, measured ${m.toFixed(2)} us</title></circle>`);
    }
    out.push(`<text x="${ox + PAD + 4}" y="${oy + 22}">pair (${a}, ${b})</text>`);
    out.push(`<text x="${ox + PAD + inner / 2}" y="${oy + inner + 36}" text-anchor="middle" fill="#333">expected</text>`);
    out.push(`<text x="${ox + 10}" y="${oy + 8 + inner / 2}" text-anchor="middle" fill="#333" transform="rotate(-90 ${ox + 10} ${oy + 8 + inner / 2})">measured</text>`);
    out.push(`</g>`);
  }
  out.push('</svg>');
  return out.join('\n') + '\n';
}

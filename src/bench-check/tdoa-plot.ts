/**
 * An SVG picture of a bench fit: one panel per mic pair, measured delay against the delay the
 * file's geometry expects (dots), the fitted model (rings) and the line of agreement; below
 * them the residuals, measured minus expected per pair and take in microseconds, one row per
 * pair on a common scale, where a channel's timing offset shows as every pair with that
 * channel sitting off zero by the same amount, and swapped channels as pairs whose residuals
 * scatter with the direction. Hand-written SVG, no scripts; pure (a string out).
 */
import type { BenchFit } from './array-fit.js';

/** Per pair and take: measured minus expected tdoa, microseconds (NaN where not measured). */
export function residualsUs(fit: BenchFit): number[][] {
  return fit.pairs.map((_, p) => fit.takes.map((t) => (t.measuredS[p]! - t.expectedS[p]!) * 1e6));
}

export interface PairResidual {
  pair: [number, number];
  /** Mean, rms and largest magnitude over the takes, microseconds (null when no take measured it). */
  mean_us: number | null;
  rms_us: number | null;
  max_abs_us: number | null;
}

export function pairResiduals(fit: BenchFit): PairResidual[] {
  return residualsUs(fit).map((row, p) => {
    const v = row.filter(Number.isFinite);
    const [a, b] = fit.pairs[p]!;
    if (v.length === 0) return { pair: [a, b], mean_us: null, rms_us: null, max_abs_us: null };
    const r = (x: number): number => Math.round(x * 1000) / 1000;
    return {
      pair: [a, b],
      mean_us: r(v.reduce((s, x) => s + x, 0) / v.length),
      rms_us: r(Math.sqrt(v.reduce((s, x) => s + x * x, 0) / v.length)),
      max_abs_us: r(Math.max(...v.map(Math.abs))),
    };
  });
}

/** Take colours of the residual rows (this project's own set). */
const TAKE_COLOURS = ['#3b7dd8', '#e08a1e', '#2a9d4a', '#b8306a', '#6a4fc9', '#8a6d00', '#0f8b8d', '#c4302b'];

const ROW_H = 26;

/** The residual panel at vertical offset `top`, `width` wide: returns its SVG and its height. */
function residualPanel(fit: BenchFit, top: number, width: number): { svg: string[]; height: number } {
  const rows = residualsUs(fit);
  const sums = pairResiduals(fit);
  const all = rows.flat().filter(Number.isFinite);
  // A round half-width above the largest residual (at least 10 us, so a clean array reads as clean).
  const reach = niceStep(Math.max(8, ...all.map(Math.abs)) * 1.15 * 4);
  const left = 80;
  const right = 190;
  const inner = width - left - right;
  const x = (us: number): number => left + ((us + reach) / (2 * reach)) * inner;
  const y0 = top + 58;
  const height = 58 + rows.length * ROW_H + 40;
  const out: string[] = [];
  out.push(`<g id="residuals" data-reach-us="${reach}">`);
  out.push(`<text x="10" y="${top + 18}" font-size="14">residuals: measured minus expected tdoa per pair and take, microseconds</text>`);
  out.push(`<text x="10" y="${top + 34}" fill="#555">a channel's timing offset moves all its pairs off zero alike; swapped channels scatter with the direction</text>`);
  out.push(`<rect x="${left}" y="${y0}" width="${inner}" height="${rows.length * ROW_H}" fill="none" stroke="#999"/>`);
  const step = niceStep(2 * reach);
  for (let v = -Math.floor(reach / step) * step; v <= reach + 1e-9; v += step) {
    const xv = x(v).toFixed(1);
    out.push(`<line x1="${xv}" y1="${y0}" x2="${xv}" y2="${y0 + rows.length * ROW_H}" stroke="${v === 0 ? '#555' : '#eee'}"${v === 0 ? ' stroke-width="1.5"' : ''}/>`);
    out.push(`<text x="${xv}" y="${y0 + rows.length * ROW_H + 16}" text-anchor="middle" fill="#555">${Number(v.toPrecision(6))}</text>`);
  }
  out.push(`<text x="${left + inner / 2}" y="${y0 + rows.length * ROW_H + 32}" text-anchor="middle" fill="#333">measured − expected (us)</text>`);
  out.push(`<text x="${left + inner + 10}" y="${y0 - 6}" fill="#333">mean, rms over takes</text>`);
  rows.forEach((row, p) => {
    const [a, b] = fit.pairs[p]!;
    const cy = y0 + p * ROW_H + ROW_H / 2;
    if (p % 2 === 1) out.push(`<rect x="${left}" y="${y0 + p * ROW_H}" width="${inner}" height="${ROW_H}" fill="#f4f6f8"/>`);
    out.push(`<text x="${left - 8}" y="${cy + 4}" text-anchor="end">pair (${a}, ${b})</text>`);
    row.forEach((us, t) => {
      if (!Number.isFinite(us)) return;
      const shown = Math.max(-reach, Math.min(reach, us));
      const colour = TAKE_COLOURS[t % TAKE_COLOURS.length]!;
      out.push(
        `<circle cx="${x(shown).toFixed(1)}" cy="${(cy + ((t % 3) - 1) * 4).toFixed(1)}" r="3.5" fill="${colour}" fill-opacity="0.85" data-pair="${a}-${b}" data-take="${t}" data-residual-us="${us.toFixed(2)}"><title>${esc(fit.takes[t]!.label)}: ${us.toFixed(2)} us</title></circle>`,
      );
    });
    const s = sums[p]!;
    if (s.mean_us !== null) {
      out.push(`<line x1="${x(Math.max(-reach, Math.min(reach, s.mean_us))).toFixed(1)}" y1="${cy - 9}" x2="${x(Math.max(-reach, Math.min(reach, s.mean_us))).toFixed(1)}" y2="${cy + 9}" stroke="#000" stroke-width="2"/>`);
      out.push(`<text x="${left + inner + 10}" y="${cy + 4}" data-pair="${a}-${b}" data-mean-us="${s.mean_us}" data-rms-us="${s.rms_us}">${s.mean_us >= 0 ? '+' : ''}${s.mean_us.toFixed(1)} us, rms ${s.rms_us!.toFixed(1)}</text>`);
    }
  });
  out.push('</g>');
  return { svg: out, height };
}

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
  const residuals = residualPanel(fit, rows * PANEL + 60, W);
  const H = rows * PANEL + 60 + residuals.height;
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
  out.push(...residuals.svg);
  out.push('</svg>');
  return out.join('\n') + '\n';
}

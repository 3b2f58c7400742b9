/** The readable accuracy report (`bearline accuracy` without --json): plain aligned text. */
import { DELAY_GATE_DEG, type AccuracyReport, type AngleFigures } from './score.js';

const pct = (x: number): string => `${(100 * x).toFixed(1)}%`;
const deg = (x: number | null): string => (x === null ? '-' : `${x.toFixed(2)} deg`);
const us = (s: number | null): string => (s === null ? '-' : (s * 1e6).toFixed(3));

function table(rows: string[][]): string[] {
  const widths = rows[0]!.map((_, c) => Math.max(...rows.map((r) => r[c]!.length)));
  return rows.map((r) => r.map((cell, c) => (c === 0 ? cell.padEnd(widths[c]!) : cell.padStart(widths[c]!))).join('  ').trimEnd());
}

function shareAt(f: AngleFigures, d: number): string {
  const w = f.within.find((x) => x.deg === d);
  return w ? pct(w.share) : '-';
}

export interface ReportContext {
  recording: string;
  truth: string;
  /** Observation time the bound is taken over (s). */
  observationS: number;
  /** How the coherence for the bound was found. */
  coherenceFrom: string;
}

export function formatAccuracyReport(r: AccuracyReport, ctx: ReportContext): string {
  const out: string[] = [];
  out.push(`accuracy of ${ctx.recording} against ${ctx.truth}`);
  const est = r.voicedHops ? ` (${pct(r.estimatedHops / r.voicedHops)})` : '';
  out.push(`  hops ${r.hops}; voiced (a true source active) ${r.voicedHops}; of these with a direction ${r.estimatedHops}${est}`);
  for (const w of r.within) out.push(`  within ${String(w.deg).padStart(2)} deg of an active source: ${pct(w.share).padStart(6)} of voiced hops`);
  out.push(`  error over voiced hops with a direction: median ${deg(r.medianDeg)}, 90th percentile ${deg(r.p90Deg)}`);
  out.push('');
  out.push('per source, over the hops where it was the only one active:');
  out.push(
    ...table([
      ['source', 'kind', 'hops', 'directions', '<=2 deg', '<=5 deg', '<=10 deg', 'median', '90th pct'],
      ...r.sources.map((s) => [
        s.source,
        s.fixed ? 'fixed' : 'moving',
        String(s.voicedHops),
        String(s.estimatedHops),
        shareAt(s, 2),
        shareAt(s, 5),
        shareAt(s, 10),
        deg(s.medianDeg),
        deg(s.p90Deg),
      ]),
    ]).map((l) => `  ${l}`),
  );
  out.push('');
  if (r.delays.length === 0) {
    out.push('delay error: no fixed source was heard alone with a direction');
  } else {
    out.push(
      `delay error of fixed sources heard alone, against the Cramer-Rao bound of Knapp and Carter (1976) over T = ${(ctx.observationS * 1000).toFixed(1)} ms (what one hop's estimate draws on), coherence ${ctx.coherenceFrom}:`,
    );
    out.push(
      ...table([
        ['source', 'pair', 'hops', 'rms us', `hops <=${DELAY_GATE_DEG} deg`, 'their rms us', 'bound us', 'ratio'],
        ...r.delays.map((d) => [
          d.source,
          `${d.pair[0]}-${d.pair[1]}`,
          String(d.hops),
          us(d.rmsS),
          String(d.gatedHops),
          us(d.gatedRmsS),
          us(d.boundS),
          d.ratio === null ? '-' : d.ratio.toFixed(2),
        ]),
      ]).map((l) => `  ${l}`),
    );
    out.push(`  ratio = rms over the hops whose direction lay within ${DELAY_GATE_DEG} deg (the bound's small-error regime) / bound`);
    out.push('  T: one frame, or with --memory the effective span of the exponentially weighted evidence, hop x (1 + m) / (1 - m)');
  }
  return out.join('\n') + '\n';
}

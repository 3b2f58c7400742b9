/**
 * `bearline accuracy --json`: the report with snake_case keys like every other output of
 * bearline (records, check-array's --json, /health), and the way back for programs (and tests)
 * that read it into the scorer's types.
 */
import type { MicPair } from '../geometry/array-geometry.js';
import type { AccuracyReport, AngleFigures, PairDelayFigures, SourceFigures } from './score.js';

export interface AngleFiguresJson {
  voiced_hops: number;
  estimated_hops: number;
  within: { deg: number; share: number }[];
  median_deg: number | null;
  p90_deg: number | null;
}

export interface AccuracyReportJson extends AngleFiguresJson {
  hops: number;
  sources: (AngleFiguresJson & { source: string; fixed: boolean })[];
  delays: { source: string; pair: [number, number]; hops: number; rms_s: number; gated_hops: number; gated_rms_s: number | null; bound_s: number | null; ratio: number | null }[];
}

const angleJson = (a: AngleFigures): AngleFiguresJson => ({
  voiced_hops: a.voicedHops,
  estimated_hops: a.estimatedHops,
  within: a.within.map((w) => ({ deg: w.deg, share: w.share })),
  median_deg: a.medianDeg,
  p90_deg: a.p90Deg,
});

const angleBack = (a: AngleFiguresJson): AngleFigures => ({
  voicedHops: a.voiced_hops,
  estimatedHops: a.estimated_hops,
  within: a.within.map((w) => ({ deg: w.deg, share: w.share })),
  medianDeg: a.median_deg,
  p90Deg: a.p90_deg,
});

export function accuracyReportJson(r: AccuracyReport): AccuracyReportJson {
  return {
    hops: r.hops,
    ...angleJson(r),
    sources: r.sources.map((s) => ({ source: s.source, fixed: s.fixed, ...angleJson(s) })),
    delays: r.delays.map((d) => ({
      source: d.source,
      pair: [d.pair[0], d.pair[1]],
      hops: d.hops,
      rms_s: d.rmsS,
      gated_hops: d.gatedHops,
      gated_rms_s: d.gatedRmsS,
      bound_s: d.boundS,
      ratio: d.ratio,
    })),
  };
}

export function accuracyReportFromJson(j: AccuracyReportJson): AccuracyReport {
  return {
    hops: j.hops,
    ...angleBack(j),
    sources: j.sources.map((s): SourceFigures => ({ source: s.source, fixed: s.fixed, ...angleBack(s) })),
    delays: j.delays.map(
      (d): PairDelayFigures => ({
        source: d.source,
        pair: [d.pair[0], d.pair[1]] as MicPair,
        hops: d.hops,
        rmsS: d.rms_s,
        gatedHops: d.gated_hops,
        gatedRmsS: d.gated_rms_s,
        boundS: d.bound_s,
        ratio: d.ratio,
      }),
    ),
  };
}

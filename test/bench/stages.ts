/**
 * The cost of each stage of the per-hop path (issue 14, item 1): the analyzer's stages one by
 * one (src/analysis/hop-analyzer.ts: spectra, weights, cross-spectra, correlations, candidates
 * (the pair's peaks or the SRP search), band voting with refinement and confidence), then the
 * tracker (TrackingSession, events only) and the frame record written as a JSON line.
 * Each stage's time is summed over a 10 s stream with a clock read between stages (about
 * 0.1 us per read, small beside a stage); the figure is the best of several passes.
 * Report only: nothing passes or fails on a time.
 *
 * Alone: `npx tsx test/bench/stages.ts`.
 */
import { fileURLToPath } from 'node:url';
import { createAnalysis } from '../../src/analysis/analysis.js';
import type { AnalysisOptions } from '../../src/analysis/analysis-options.js';
import type { ArrayGeometry } from '../../src/geometry/array-geometry.js';
import { toFrameRecord } from '../../src/records/frame-record.js';
import { callbackSink } from '../../src/sinks/record-sink.js';
import { TrackingSession } from '../../src/track/tracking-session.js';
import type { TrackerOptions } from '../../src/track/options.js';
import { coreCases, noiseFrames, RATE } from './core.js';

export const STAGES = ['spectra', 'weights', 'cross-spectra', 'correlations', 'candidates/SRP', 'voting+refine', 'tracking', 'records'] as const;

export interface StageFigures {
  name: string;
  /** Microseconds per hop, per stage (STAGES order). */
  us: number[];
  total: number;
  hops: number;
  /** The analysis hop, samples. */
  hopSamples: number;
}

/** Per-stage cost of the analysis (with `analysis` and `tracker` settings) on the bench's noise stream. */
export function benchStages(name: string, geometry: ArrayGeometry, analysis: AnalysisOptions = {}, tracker: Partial<TrackerOptions> = {}, seconds = 10, passes = 5): StageFigures {
  const C = geometry.mics.length;
  const signal = noiseFrames(C, seconds * RATE);
  const best = new Array<number>(STAGES.length).fill(Infinity);
  let hops = 0;
  let hopSamples = 0;
  for (let pass = 0; pass < passes; pass++) {
    const setup = createAnalysis(geometry, RATE, 343, analysis);
    const a = setup.analyzer;
    const session = TrackingSession.of(setup, tracker, callbackSink('bench', { event: () => undefined }));
    const settings = { headingDeg: null, mirror: setup.model.mirror, pairs: setup.model.pairs, diagnostics: false, viewerFields: false };
    const n = a.frame;
    const frames = Array.from({ length: C }, () => new Float64Array(n));
    hops = Math.floor((signal[0]!.length - n) / a.hop) + 1;
    hopSamples = a.hop;
    const sum = new Float64Array(STAGES.length);
    let chars = 0;
    for (let h = 0; h < hops; h++) {
      for (let c = 0; c < C; c++) {
        const src = signal[c]!;
        const dst = frames[c]!;
        for (let i = 0; i < n; i++) dst[i] = src[h * a.hop + i]!;
      }
      const t0 = performance.now();
      a.spectraStage(frames);
      const t1 = performance.now();
      a.weightStage();
      const t2 = performance.now();
      const sounding = a.crossSpectraStage();
      const t3 = performance.now();
      let t4 = t3;
      let t5 = t3;
      let t6 = t3;
      if (sounding) {
        a.correlationStage();
        t4 = performance.now();
        const K = a.candidateStage();
        t5 = performance.now();
        a.fusionStage(K);
        t6 = performance.now();
      }
      const r = a.result;
      void session.hop(r);
      const t7 = performance.now();
      chars += JSON.stringify(toFrameRecord(r, settings)).length;
      const t8 = performance.now();
      sum[0]! += t1 - t0;
      sum[1]! += t2 - t1;
      sum[2]! += t3 - t2;
      sum[3]! += t4 - t3;
      sum[4]! += t5 - t4;
      sum[5]! += t6 - t5;
      sum[6]! += t7 - t6;
      sum[7]! += t8 - t7;
    }
    if (chars === 0) throw new Error('no records written');
    for (let s = 0; s < STAGES.length; s++) best[s] = Math.min(best[s]!, (sum[s]! * 1000) / hops);
  }
  return { name, us: best, total: best.reduce((s, x) => s + x, 0), hops, hopSamples };
}

export function formatStages(rows: StageFigures[], title: string): string {
  const lines = [title, `  ${'case'.padEnd(25)} ${STAGES.map((s) => s.padStart(Math.max(8, s.length))).join(' ')}    total us/hop`];
  for (const r of rows) {
    lines.push(`  ${r.name.padEnd(25)} ${r.us.map((u, i) => u.toFixed(1).padStart(Math.max(8, STAGES[i]!.length))).join(' ')}    ${r.total.toFixed(1).padStart(8)}`);
    lines.push(`  ${''.padEnd(25)} ${r.us.map((u, i) => `${((100 * u) / r.total).toFixed(0)}%`.padStart(Math.max(8, STAGES[i]!.length))).join(' ')}`);
  }
  return lines.join('\n');
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  console.log(formatStages(coreCases().map(([n, g]) => benchStages(n, g)), 'cost per stage, us per hop (best of 5 passes over 10 s of noise; defaults):'));
}

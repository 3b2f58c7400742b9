/**
 * Masked callers (issue 13): per source of motion-matrix cells, how often the analysis reports a
 * source near it on the hops it calls, split by whether another source calls on the same hop.
 * A caller heard alone but lost whenever another one calls is masked by it (the band fusion
 * gives the other all the bands, see the closing note of turn 2's session 11). The analysis runs
 * in this process on the cells' cached renders (rendered by the motion matrix when missing),
 * with the cell's speed of sound and the defaults, or scan settings given with --set; twice:
 * alone, and followed by the tracker as scan runs it (TrackingSession), which hands the
 * analysis its tracks' predictions to look for (src/analysis/watched-directions.ts). Each run's
 * time per hop is reported beside (one process, the same cells: a ratio, not a target).
 * A report only: nothing passes or fails.
 *
 *   npx tsx test/bench/masked-hops.ts [--seed N] [--cells cho02,crs03] [--near DEG] [--set memory=0.1 ...]
 *
 * Caution: the cached WAV files are ordinary recordings; if you play them through speakers or
 * earphones, start at a low volume.
 */
import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { createAnalysis } from '../../src/analysis/analysis.js';
import { Framer } from '../../src/dsp/framer.js';
import { loadGeometryFile } from '../../src/geometry/geometry-file.js';
import { wrapDeg } from '../../src/geometry/vec3.js';
import { indexTruth, parseTruth } from '../../src/accuracy/truth.js';
import { callbackSink } from '../../src/sinks/record-sink.js';
import { TrackingSession } from '../../src/track/tracking-session.js';
import { parseSettings } from './matrix/run-bearline.js';
import { motionCells, rendered, type Cell } from './motion-matrix.js';

export interface MaskedCounts {
  source: string;
  /** Hops the source calls with no other source calling, and how many of them report a source near it. */
  alone: number;
  aloneFound: number;
  /** Hops it calls while another source calls too, and how many of them report a source near it. */
  overlapped: number;
  overlappedFound: number;
}

export interface MaskedRun {
  counts: MaskedCounts[];
  /** Hops analysed and the time they took (analysis, and the tracker when it runs), ms. */
  hops: number;
  ms: number;
}

/** The counts for one cell; `analysis` as parseSettings gives them (defaults when empty); `tracked`: with the tracker (and its watched directions). */
export function maskedHops(cell: Cell, nearDeg: number, analysis: Record<string, unknown> = {}, tracked = false): MaskedRun {
  const wav = rendered(cell);
  const geometry = loadGeometryFile(wav.replace(/\.wav$/, '.array.json'));
  const C = geometry.mics.length;
  const raw = execFileSync('sox', [wav, '-t', 'f32', '-'], { maxBuffer: 1 << 30 });
  const all = new Float32Array(raw.buffer, raw.byteOffset, raw.length / 4);
  const n = all.length / C;
  const signal = Array.from({ length: C }, (_, c) => Float32Array.from({ length: n }, (_, i) => all[i * C + c]!));
  const truth = indexTruth(parseTruth(readFileSync(wav.replace(/\.wav$/, '.truth.jsonl'), 'utf8'), wav));
  const rate = Number(JSON.parse(readFileSync(wav.replace(/\.wav$/, '.scene.json'), 'utf8')).sample_rate_hz ?? 48000);
  const setup = createAnalysis(geometry, rate, 343 * cell.cRatio, analysis);
  const analyzer = setup.analyzer;
  const session = tracked ? TrackingSession.of(setup, {}, callbackSink('none', {})) : null;
  const counts = new Map(truth.sources.map((s) => [s.name, { source: s.name, alone: 0, aloneFound: 0, overlapped: 0, overlappedFound: 0 }]));
  const frames = analyzer.inputFrames() ?? Array.from({ length: C }, () => new Float64Array(analyzer.frame));
  let hops = 0;
  let ms = 0;
  new Framer(C, analyzer.frame, analyzer.hop, frames).push(signal, n, (f) => {
    const t0 = performance.now();
    const r = analyzer.process(f);
    session?.hop(r);
    ms += performance.now() - t0;
    hops++;
    const active = truth.activeAt(r.timeS);
    for (const t of active) {
      const c = counts.get(t.source)!;
      let found = false;
      for (let i = 0; i < r.sourceCount && !found; i++) found = Math.abs(wrapDeg(r.sources[i]!.azimuthDeg - t.azimuth_deg)) <= nearDeg;
      if (active.length === 1) {
        c.alone++;
        if (found) c.aloneFound++;
      } else {
        c.overlapped++;
        if (found) c.overlappedFound++;
      }
    }
  });
  return { counts: [...counts.values()], hops, ms };
}

function main(argv: readonly string[]): number {
  let seed = 1313;
  let near = 8;
  let ids: string[] = [];
  const set: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    if (argv[i] === '--seed') seed = Number(argv[++i]);
    else if (argv[i] === '--cells') ids = (argv[++i] ?? '').split(',');
    else if (argv[i] === '--near') near = Number(argv[++i]);
    else if (argv[i] === '--set') set.push(argv[++i] ?? '');
    else {
      console.error(`masked-hops: unknown argument ${argv[i]} (give --seed N, --cells ID,..., --near DEG, --set flag=value)`);
      return 2;
    }
  }
  const analysis = parseSettings(set).analysis;
  const cells = motionCells(false, seed).filter((c) => ids.length === 0 || ids.includes(c.id) || ids.includes(c.family));
  if (cells.length === 0) {
    console.error(`masked-hops: no cell matches ${ids.join(',')} (ids as the motion matrix prints them, or a family: pass, cross, chorus)`);
    return 2;
  }
  const pct = (a: number, b: number) => (b > 0 ? `${((100 * a) / b).toFixed(0)}%` : '-').padStart(5);
  console.log(`hops with a reported source within ${near} deg of the caller (seed ${seed}): calling alone / calling while another source calls; the analysis alone -> followed by the tracker`);
  const time = [
    { hops: 0, ms: 0 },
    { hops: 0, ms: 0 },
  ];
  const sum = [0, 0, 0, 0];
  for (const cell of cells) {
    const runs = [maskedHops(cell, near, analysis), maskedHops(cell, near, analysis, true)];
    runs.forEach((r, i) => {
      time[i]!.hops += r.hops;
      time[i]!.ms += r.ms;
    });
    runs[0]!.counts.forEach((c, i) => {
      const t = runs[1]!.counts[i]!;
      sum[0] += c.overlappedFound;
      sum[1] += t.overlappedFound;
      sum[2] += c.overlapped;
      console.log(
        `  ${cell.id.padEnd(8)} ${c.source.padEnd(9)} alone ${String(c.aloneFound).padStart(4)} -> ${String(t.aloneFound).padStart(4)} of ${String(c.alone).padStart(4)} ${pct(c.aloneFound, c.alone)} -> ${pct(t.aloneFound, t.alone)}   overlapped ${String(c.overlappedFound).padStart(4)} -> ${String(t.overlappedFound).padStart(4)} of ${String(c.overlapped).padStart(4)} ${pct(c.overlappedFound, c.overlapped)} -> ${pct(t.overlappedFound, t.overlapped)}`,
      );
    });
  }
  const us = (i: number) => ((1000 * time[i]!.ms) / Math.max(1, time[i]!.hops)).toFixed(1);
  console.log(`overlapped hops found: ${sum[0]} -> ${sum[1]} of ${sum[2]}; time per hop: analysis ${us(0)} us, analysis and tracker ${us(1)} us (${(time[1]!.ms / Math.max(1e-9, time[0]!.ms)).toFixed(2)}x)`);
  return 0;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) process.exitCode = main(process.argv.slice(2));

/**
 * Masked callers (issue 13): per source of motion-matrix cells, how often the analysis reports a
 * source near it on the hops it calls, split by whether another source calls on the same hop.
 * A caller heard alone but lost whenever another one calls is masked by it (the band fusion
 * gives the other all the bands, see the closing note of turn 2's session 11). The analysis runs
 * in this process on the cells' cached renders (rendered by the motion matrix when missing),
 * with the cell's speed of sound and the defaults, or scan settings given with --set.
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

/** The counts for one cell; `analysis` as parseSettings gives them (defaults when empty). */
export function maskedHops(cell: Cell, nearDeg: number, analysis: Record<string, unknown> = {}): MaskedCounts[] {
  const wav = rendered(cell);
  const geometry = loadGeometryFile(wav.replace(/\.wav$/, '.array.json'));
  const C = geometry.mics.length;
  const raw = execFileSync('sox', [wav, '-t', 'f32', '-'], { maxBuffer: 1 << 30 });
  const all = new Float32Array(raw.buffer, raw.byteOffset, raw.length / 4);
  const n = all.length / C;
  const signal = Array.from({ length: C }, (_, c) => Float32Array.from({ length: n }, (_, i) => all[i * C + c]!));
  const truth = indexTruth(parseTruth(readFileSync(wav.replace(/\.wav$/, '.truth.jsonl'), 'utf8'), wav));
  const rate = Number(JSON.parse(readFileSync(wav.replace(/\.wav$/, '.scene.json'), 'utf8')).sample_rate_hz ?? 48000);
  const { analyzer } = createAnalysis(geometry, rate, 343 * cell.cRatio, analysis);
  const counts = new Map(truth.sources.map((s) => [s.name, { source: s.name, alone: 0, aloneFound: 0, overlapped: 0, overlappedFound: 0 }]));
  const frames = analyzer.inputFrames() ?? Array.from({ length: C }, () => new Float64Array(analyzer.frame));
  new Framer(C, analyzer.frame, analyzer.hop, frames).push(signal, n, (f) => {
    const r = analyzer.process(f);
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
  return [...counts.values()];
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
  console.log(`hops with a reported source within ${near} deg of the caller (seed ${seed}): calling alone / calling while another source calls`);
  for (const cell of cells) {
    for (const c of maskedHops(cell, near, analysis)) {
      console.log(`  ${cell.id.padEnd(8)} ${c.source.padEnd(9)} alone ${String(c.aloneFound).padStart(4)} of ${String(c.alone).padStart(4)} ${pct(c.aloneFound, c.alone)}   overlapped ${String(c.overlappedFound).padStart(4)} of ${String(c.overlapped).padStart(4)} ${pct(c.overlappedFound, c.overlapped)}`);
    }
  }
  return 0;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) process.exitCode = main(process.argv.slice(2));

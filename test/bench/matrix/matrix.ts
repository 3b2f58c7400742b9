/**
 * Running the matrix: render what the cache lacks, then per cell the baseline (cached too: it
 * depends only on the audio and bearline's default frame and hop), bearline in-process with
 * the given settings, and the scoring. Used by test/bench/accuracy-matrix.ts and by the
 * corner regression test.
 */
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { UsageError } from '../../../src/util/errors.js';
import type { ArrayGeometry } from '../../../src/geometry/array-geometry.js';
import { ambiguityOf } from './angles.js';
import { runBaseline, type BaselineHop } from './baseline.js';
import { cacheDir, hashOf, writeAside } from './cache.js';
import { selectCells, type CellDef, type Split } from './corpus.js';
import { ensureRendered, isRendered, loadRendered } from './render.js';
import { defaultFrameHop, runBearline, type StageSettings } from './run-bearline.js';
import { scoreCell, type CellScore, type HopRow } from './score.js';

export interface MatrixOptions {
  readonly split: Split | 'all';
  readonly quick: boolean;
  /** Only these cells (ids, or id prefixes such as "rum" or "kem0"). */
  readonly cells?: readonly string[];
  readonly settings: StageSettings;
  /** Progress lines (stderr in the command). */
  readonly log?: (line: string) => void;
}

export interface MatrixTiming {
  /** Cells rendered in this run and the seconds it took (0 when all were cached). */
  readonly rendered: number;
  readonly renderS: number;
  /** Seconds computing the baseline where its cache lacked it. */
  readonly baselineS: number;
  /** Seconds in bearline's analysis and tracking. */
  readonly bearlineS: number;
  /** Seconds of the whole analysis part (loading, baseline, bearline, scoring). */
  readonly analyseS: number;
  /** Seconds of audio analysed. */
  readonly audioS: number;
}

export interface MatrixResult {
  readonly cells: CellScore[];
  readonly rows: HopRow[];
  readonly timing: MatrixTiming;
}

let baselineVersion: string | null = null;
function baselineHash(): string {
  if (!baselineVersion) baselineVersion = hashOf(readFileSync(fileURLToPath(new URL('./baseline.ts', import.meta.url)), 'utf8'));
  return baselineVersion;
}

export function pickCells(opts: Pick<MatrixOptions, 'split' | 'quick' | 'cells'>): CellDef[] {
  let cells = selectCells(opts.split, opts.quick);
  if (opts.cells && opts.cells.length) {
    const want = opts.cells;
    cells = cells.filter((c) => want.some((w) => c.id === w || c.id.startsWith(w)));
  }
  return cells;
}

export function runMatrix(opts: MatrixOptions): MatrixResult {
  const log = opts.log ?? (() => undefined);
  const cells = pickCells(opts);
  if (cells.length === 0) throw new UsageError('no cell matches: check --split, --quick and --cells (ids such as base01t, or prefixes such as rum)');
  let rendered = 0;
  let renderS = 0;
  const missing = cells.filter((c) => !isRendered(c));
  missing.forEach((c, i) => {
    log(`rendering ${i + 1}/${missing.length} ${c.id} (${c.condition})`);
    renderS += ensureRendered(c);
    rendered++;
  });
  const t0 = performance.now();
  let baselineS = 0;
  let bearlineS = 0;
  let audioS = 0;
  const scores: CellScore[] = [];
  const rows: HopRow[] = [];
  cells.forEach((cell, i) => {
    const r = loadRendered(cell);
    audioS += r.channels[0]!.length / r.sampleRate;
    const { frame, hop, lagMargin } = defaultFrameHop(r.sampleRate);
    const basePath = join(cacheDir(), `${r.key}.gcc-${frame}-${hop}-${baselineHash()}.json`);
    let base: BaselineHop[];
    if (existsSync(basePath)) {
      base = JSON.parse(readFileSync(basePath, 'utf8')) as BaselineHop[];
    } else {
      const tb = performance.now();
      base = runBaseline(r.mics, r.sampleRate, r.speedOfSound, r.channels, frame, hop, lagMargin);
      baselineS += (performance.now() - tb) / 1000;
      writeAside(basePath, JSON.stringify(base));
    }
    const tb = performance.now();
    const run = runBearline(r.mics, r.sampleRate, r.speedOfSound, r.channels, opts.settings);
    bearlineS += (performance.now() - tb) / 1000;
    const geometry: ArrayGeometry = { name: cell.geometry, headingDeg: null, mics: r.mics.map((position, channel) => ({ channel, position })) };
    const s = scoreCell(r, run, base, ambiguityOf(geometry));
    scores.push(s.score);
    for (const row of s.rows) rows.push(row);
    log(`analysed ${i + 1}/${cells.length} ${cell.id}: within 5 deg ${(100 * s.score.bearline.within[1]!).toFixed(1)}% (baseline ${(100 * s.score.baseline.within[1]!).toFixed(1)}%)`);
  });
  const analyseS = (performance.now() - t0) / 1000;
  return { cells: scores, rows, timing: { rendered, renderS, baselineS, bearlineS, analyseS, audioS } };
}

/**
 * Before/after check for work on the analysis kernels (issue 14): runs the analysis with the
 * given settings over cells of the accuracy matrix (their cached audio, rendered when missing)
 * and writes every hop's outputs (azimuth, elevation, confidence, valid, every pair's delay,
 * the further sources, the confidence features), or compares them with a file written before.
 *
 *   npx tsx test/bench/hop-diff.ts --write before.json [--cells geo,base] [--split tune] [--set k=v]
 *   npx tsx test/bench/hop-diff.ts --compare before.json [same selection]
 *
 * The comparison prints per field the largest absolute difference and how many hops differ by
 * more than a rounding tolerance (1e-9 relative for delays and features, 1e-6 deg for angles);
 * exit code 1 when any hop changed beyond it. A report only: not a test.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { createAnalysis } from '../../src/analysis/analysis.js';
import { Framer } from '../../src/dsp/framer.js';
import type { ArrayGeometry } from '../../src/geometry/array-geometry.js';
import { pickCells } from './matrix/matrix.js';
import { ensureRendered, isRendered, loadRendered } from './matrix/render.js';
import { parseSettings } from './matrix/run-bearline.js';

interface HopRow {
  az: number | null;
  el: number | null;
  conf: number;
  valid: boolean;
  tdoa: number[];
  sources: number[];
  feat: number[];
}

type Dump = Record<string, HopRow[]>;

const num = (x: number): number | null => (Number.isFinite(x) ? x : null);

function dumpCell(id: string, assignments: string[]): HopRow[] {
  const cell = pickCells({ split: 'all', quick: false, cells: [id] }).find((c) => c.id === id)!;
  if (!isRendered(cell)) ensureRendered(cell);
  const r = loadRendered(cell);
  const geometry: ArrayGeometry = { name: 'matrix', headingDeg: null, mics: r.mics.map((position, channel) => ({ channel, position })) };
  const setup = createAnalysis(geometry, r.sampleRate, r.speedOfSound, parseSettings(assignments).analysis);
  const rows: HopRow[] = [];
  const framer = new Framer(setup.analyzer.channels, setup.analyzer.frame, setup.analyzer.hop, setup.analyzer.inputFrames());
  framer.push(r.channels, r.channels[0]!.length, (frames) => {
    const h = setup.analyzer.process(frames);
    const has = h.sourceCount > 0;
    rows.push({
      az: has ? h.sources[0]!.azimuthDeg : null,
      el: has ? h.sources[0]!.elevationDeg : null,
      conf: h.confidence,
      valid: h.valid,
      tdoa: Array.from(h.tdoaS, (x) => num(x) ?? NaN),
      sources: h.sources.slice(0, h.sourceCount).flatMap((s) => [s.azimuthDeg, s.elevationDeg ?? 0, s.score]),
      feat: [h.agree, h.share, h.evidence, h.apertureWaves, h.fresh, h.snrDb, h.onset, h.levelDbfs],
    });
  });
  return rows;
}

interface Diff {
  max: number;
  changed: number;
}

function main(argv: string[]): number {
  let write: string | null = null;
  let compare: string | null = null;
  const cells: string[] = [];
  const set: string[] = [];
  let split: 'tune' | 'check' | 'all' = 'tune';
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i]!;
    if (a === '--write') write = argv[++i]!;
    else if (a === '--compare') compare = argv[++i]!;
    else if (a === '--cells') cells.push(...argv[++i]!.split(','));
    else if (a === '--split') split = argv[++i] as typeof split;
    else if (a === '--set') set.push(argv[++i]!);
    else throw new Error(`unknown argument ${a}`);
  }
  const ids = pickCells({ split, quick: false, cells }).map((c) => c.id);
  const t0 = performance.now();
  const dump: Dump = {};
  for (const id of ids) dump[id] = dumpCell(id, set);
  const hops = Object.values(dump).reduce((s, r) => s + r.length, 0);
  console.log(`${ids.length} cells, ${hops} hops analysed in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  if (write) {
    writeFileSync(write, JSON.stringify(dump, (_k, v: unknown) => (typeof v === 'number' && !Number.isFinite(v) ? String(v) : v)));
    console.log(`wrote ${write}`);
  }
  if (!compare) return 0;
  const before = JSON.parse(readFileSync(compare, 'utf8'), (_k, v: unknown) => (v === 'NaN' ? NaN : v === 'Infinity' ? Infinity : v === '-Infinity' ? -Infinity : v)) as Dump;
  const fields: Record<string, Diff> = {};
  const note = (name: string, a: number | null, b: number | null, tol: number): boolean => {
    const d = (fields[name] ??= { max: 0, changed: 0 });
    if (a === null || b === null || Number.isNaN(a) || Number.isNaN(b)) {
      const same = (a === null || Number.isNaN(a)) === (b === null || Number.isNaN(b));
      if (!same) {
        d.changed++;
        d.max = Infinity;
      }
      return !same;
    }
    const diff = Math.abs(a - b);
    d.max = Math.max(d.max, diff);
    if (diff > tol * Math.max(1, Math.abs(a))) {
      d.changed++;
      return true;
    }
    return false;
  };
  let changedHops = 0;
  let compared = 0;
  for (const id of ids) {
    const A = before[id];
    const B = dump[id]!;
    if (!A) {
      console.log(`${id}: not in ${compare}`);
      continue;
    }
    if (A.length !== B.length) console.log(`${id}: ${A.length} hops before, ${B.length} now`);
    for (let i = 0; i < Math.min(A.length, B.length); i++) {
      const a = A[i]!;
      const b = B[i]!;
      compared++;
      let ch = note('azimuth_deg', a.az, b.az, 1e-9);
      ch = note('elevation_deg', a.el, b.el, 1e-9) || ch;
      ch = note('confidence', a.conf, b.conf, 1e-9) || ch;
      ch = note('valid', a.valid ? 1 : 0, b.valid ? 1 : 0, 0) || ch;
      for (let p = 0; p < Math.max(a.tdoa.length, b.tdoa.length); p++) ch = note('tdoa_s', a.tdoa[p] ?? null, b.tdoa[p] ?? null, 1e-9) || ch;
      ch = note('sources', a.sources.length, b.sources.length, 0) || ch;
      for (let s = 0; s < Math.min(a.sources.length, b.sources.length); s++) ch = note('source values', a.sources[s]!, b.sources[s]!, 1e-9) || ch;
      for (let f = 0; f < a.feat.length; f++) ch = note('features', a.feat[f]!, b.feat[f]!, 1e-9) || ch;
      if (ch) changedHops++;
    }
  }
  console.log(`compared ${compared} hops with ${compare}: ${changedHops} changed beyond rounding`);
  for (const [name, d] of Object.entries(fields)) console.log(`  ${name.padEnd(14)} max |diff| ${d.max.toExponential(2).padStart(9)}  hops beyond tolerance ${d.changed}`);
  return changedHops > 0 ? 1 : 0;
}

process.exitCode = main(process.argv.slice(2));

/**
 * The accuracy matrix (issue 12, item 7): bearline's analysis on a seeded, generated corpus of
 * field conditions beside a plain GCC-PHAT baseline computed on the same audio, as a table,
 * with the issue's targets checked against it. Rendered audio is cached on disk
 * (os.tmpdir()/bearline-matrix-cache, or $BEARLINE_MATRIX_CACHE), so re-runs only analyse.
 *
 *   npx tsx test/bench/accuracy-matrix.ts [--quick] [--split tune|check|all] [--cells ID,...]
 *       [--json FILE] [--hops FILE] [--set key=value ...]
 *   npm run bench accuracy
 *
 * Caution: the cached WAV files are ordinary recordings; if you play them through speakers or
 * earphones, start at a low volume (clicks and rumble are loud at the peaks).
 */
import { writeFileSync } from 'node:fs';
import { UsageError } from '../../src/util/errors.js';
import type { Split } from './matrix/corpus.js';
import { runMatrix } from './matrix/matrix.js';
import { checkTargets, DEFINITIONS, familySummaries, formatReliability, formatSummaries, formatTable, formatTargets, reliability } from './matrix/report.js';
import { parseSettings, settingKeys } from './matrix/run-bearline.js';
import { cacheDir } from './matrix/cache.js';

const HELP = `usage: npx tsx test/bench/accuracy-matrix.ts [options]
  --quick              a reduced subset of the tune half (13 cells, seconds once cached)
  --split S            tune | check | all (default all)
  --cells ID,...       only these cells (ids or id prefixes, e.g. rum,kem01)
  --json FILE          write the table, summaries, targets and reliability as JSON
  --hops FILE          write one JSON line per hop (cell, split, family, t, conf, dir, err, calling)
  --set key=value      an analysis or tracker option (repeatable), e.g. --set memoryS=0.1
                       --set tracker.minConfidence=0.3 (a key both stages have needs its stage)
  --help
keys: analysis: ${settingKeys().analysis.join(', ')}
      tracker: ${settingKeys().tracker.join(', ')}
cache: ${cacheDir()} (BEARLINE_MATRIX_CACHE moves it)`;

interface Args {
  quick: boolean;
  split: Split | 'all';
  cells: string[];
  json: string | null;
  hops: string | null;
  set: string[];
  help: boolean;
}

function parseArgs(argv: readonly string[]): Args {
  const a: Args = { quick: false, split: 'all', cells: [], json: null, hops: null, set: [], help: false };
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i]!;
    const value = (): string => {
      const v = argv[++i];
      if (v === undefined || v.startsWith('--')) throw new UsageError(`${arg} needs a value (see --help)`);
      return v;
    };
    switch (arg) {
      case '--quick':
        a.quick = true;
        break;
      case '--split': {
        const v = value();
        if (v !== 'tune' && v !== 'check' && v !== 'all') throw new UsageError(`--split ${v}: give tune, check or all`);
        a.split = v;
        break;
      }
      case '--cells':
        a.cells.push(...value().split(',').filter((s) => s !== ''));
        break;
      case '--json':
        a.json = value();
        break;
      case '--hops':
        a.hops = value();
        break;
      case '--set':
        a.set.push(value());
        break;
      case '--help':
      case '-h':
        a.help = true;
        break;
      default:
        throw new UsageError(`unknown argument ${arg} (see --help)`);
    }
  }
  return a;
}

/** Run the matrix from command-line arguments; returns the exit code. */
export function accuracyMatrixCli(argv: readonly string[]): number {
  let args: Args;
  let settings;
  try {
    args = parseArgs(argv);
    if (args.help) {
      console.log(HELP);
      return 0;
    }
    settings = parseSettings(args.set);
  } catch (err) {
    if (err instanceof UsageError) {
      console.error(`accuracy-matrix: ${err.message}`);
      return 2;
    }
    throw err;
  }
  const t0 = performance.now();
  let res;
  try {
    res = runMatrix({
      split: args.split,
      quick: args.quick,
      cells: args.cells,
      settings,
      log: (l) => {
        // On a terminal, one progress line; otherwise only the (slow, first-run) rendering is said.
        if (process.stderr.isTTY) process.stderr.write(`\r\x1b[K${l}`);
        else if (l.startsWith('rendering')) process.stderr.write(`${l}\n`);
      },
    });
  } catch (err) {
    if (err instanceof UsageError) {
      console.error(`accuracy-matrix: ${err.message}`);
      return 2;
    }
    throw err;
  }
  if (process.stderr.isTTY) process.stderr.write('\r\x1b[K');
  const sums = familySummaries(res.cells);
  const targets = checkTargets(res.cells);
  const splits = [...new Set(res.cells.map((c) => c.split))];
  // KEMAR cells are left out: a head's delays fit no far-field direction, so their angles are never within 5 degrees
  // (the confidence fit leaves them out for the same reason: test/bench/matrix/fit_confidence.py).
  const rel = Object.fromEntries(splits.map((s) => [s, reliability(res.rows.filter((r) => r.split === s && r.family !== 'kemar'))]));
  const out: string[] = [];
  out.push(`accuracy matrix: ${res.cells.length} cells (split ${args.split}${args.quick ? ', quick' : ''}${args.cells.length ? `, cells ${args.cells.join(',')}` : ''}), settings: ${settings.given.length ? settings.given.join(' ') : 'defaults'}`);
  out.push(...DEFINITIONS.map((d) => `  ${d}`), '');
  out.push(...formatTable(res.cells));
  out.push(...formatSummaries(sums));
  out.push(...formatTargets(targets));
  for (const s of splits) out.push(...formatReliability(`${s} half`, rel[s]!));
  const t = res.timing;
  const total = (performance.now() - t0) / 1000;
  out.push(
    '',
    `time: ${total.toFixed(1)} s in all; rendering ${t.rendered} cells ${t.renderS.toFixed(1)} s; analysing ${t.audioS.toFixed(0)} s of audio ${t.analyseS.toFixed(1)} s ` +
      `(bearline ${t.bearlineS.toFixed(1)} s, ${(t.audioS / Math.max(1e-9, t.bearlineS)).toFixed(0)}x real time; baseline computed ${t.baselineS.toFixed(1)} s, the rest cached)`,
  );
  console.log(out.join('\n'));
  if (args.json) {
    writeFileSync(args.json, JSON.stringify({ generated: new Date().toISOString(), node: process.version, split: args.split, quick: args.quick, cellsFilter: args.cells, settings: settings.given, definitions: DEFINITIONS, timing: { ...t, totalS: total }, cells: res.cells, summaries: sums, targets, reliability: rel }, null, 1));
  }
  if (args.hops) writeFileSync(args.hops, res.rows.map((r) => JSON.stringify(r)).join('\n') + '\n');
  return 0;
}

if (process.argv[1] && import.meta.url === new URL(`file://${process.argv[1]}`).href) {
  try {
    process.exitCode = accuracyMatrixCli(process.argv.slice(2));
  } catch (err) {
    console.error(`accuracy-matrix: ${(err as Error).message}`);
    process.exitCode = 1;
  }
}

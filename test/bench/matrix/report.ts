/**
 * The matrix as a table: one row per cell, summaries per condition family and overall, the
 * targets of issue 12 checked against it (PASS / MISS), and the reliability of confidence per
 * decile. The same as JSON with --json.
 */
import { FAMILIES, type Family } from './corpus.js';
import { CONFIDENT, EVENT_DEG, GRACE_S, WITHIN_DEG, WRONG_DEG, type CellScore, type HopRow } from './score.js';

export interface Summary {
  readonly name: string;
  readonly cells: number;
  /** Means over cells of the within-X shares. */
  readonly within: number[];
  readonly baselineWithin: number[];
  /** Mean over cells of bearline minus baseline within 5 degrees. */
  readonly delta5: number;
  /** Pooled: events (less interferer events) / true calls; matched calls / true calls. */
  readonly eventsPerCall: number | null;
  readonly matched: number | null;
  /** Pooled over hops. */
  readonly confidentWrong: number;
  readonly gapWithDirection: number | null;
  /** Mean over cells with a one-delay figure. */
  readonly oneDelay: number | null;
}

export interface TargetCheck {
  readonly target: string;
  readonly measured: string;
  /** null: no cell of this kind in the run. */
  readonly pass: boolean | null;
}

export interface ReliabilityBin {
  readonly lo: number;
  readonly hi: number;
  readonly hops: number;
  readonly meanConfidence: number | null;
  readonly within5: number | null;
}

const pct = (x: number | null | undefined, digits = 1): string => (x === null || x === undefined ? '-' : `${(100 * x).toFixed(digits)}`);
const mean = (xs: number[]): number => (xs.length ? xs.reduce((a, b) => a + b, 0) / xs.length : 0);

export function summarise(name: string, cells: readonly CellScore[]): Summary {
  const calls = cells.reduce((a, c) => a + c.calls, 0);
  const evs = cells.reduce((a, c) => a + c.events - c.interfererEvents, 0);
  const matched = cells.reduce((a, c) => a + c.matchedCalls, 0);
  const hops = cells.reduce((a, c) => a + c.hops, 0);
  const gapCells = cells.filter((c) => c.gapHops !== null && c.gapHops > 0);
  const gapHops = gapCells.reduce((a, c) => a + c.gapHops!, 0);
  const steady = cells.filter((c) => c.oneDelay !== null);
  return {
    name,
    cells: cells.length,
    within: WITHIN_DEG.map((_, i) => mean(cells.map((c) => c.bearline.within[i]!))),
    baselineWithin: WITHIN_DEG.map((_, i) => mean(cells.map((c) => c.baseline.within[i]!))),
    delta5: mean(cells.map((c) => c.bearline.within[1]! - c.baseline.within[1]!)),
    eventsPerCall: calls ? evs / calls : null,
    matched: calls ? matched / calls : null,
    confidentWrong: hops ? cells.reduce((a, c) => a + c.confidentWrong, 0) / hops : 0,
    gapWithDirection: gapHops ? gapCells.reduce((a, c) => a + c.gapWithDirection!, 0) / gapHops : null,
    oneDelay: steady.length ? mean(steady.map((c) => c.oneDelay!.bearline)) : null,
  };
}

export function familySummaries(cells: readonly CellScore[]): Summary[] {
  const out: Summary[] = [];
  for (const f of FAMILIES) {
    const fc = cells.filter((c) => c.family === f);
    if (fc.length) out.push(summarise(f, fc));
  }
  out.push(summarise('overall', cells));
  return out;
}

/** Cells the bursts targets speak of: bursts at 20 dB SNR, without rumble or room. */
export function isBurstTargetCell(c: CellScore): boolean {
  return c.schedule === 'bursts' && c.snrDb === 20 && !c.rumble && !c.room;
}

function worst<T>(cells: readonly CellScore[], value: (c: CellScore) => T | null, worse: (a: T, b: T) => boolean): { cell: CellScore; v: T } | null {
  let w: { cell: CellScore; v: T } | null = null;
  for (const c of cells) {
    const v = value(c);
    if (v === null) continue;
    if (!w || worse(v, w.v)) w = { cell: c, v };
  }
  return w;
}

/** The targets of issue 12 on the matrix (defaults), checked against this run. */
export function checkTargets(cells: readonly CellScore[]): TargetCheck[] {
  const out: TargetCheck[] = [];
  const d = cells.map((c) => ({ c, d: c.bearline.within[1]! - c.baseline.within[1]! }));
  const bad = d.filter((x) => x.d < -0.05);
  const wd = worst(cells, (c) => c.bearline.within[1]! - c.baseline.within[1]!, (a, b) => a < b);
  out.push({
    target: 'no cell worse than plain GCC-PHAT by more than 5 points (within 5 deg)',
    measured: wd ? `${bad.length} of ${cells.length} cells worse; worst ${wd.cell.id} ${wd.v >= 0 ? '+' : ''}${pct(wd.v)} points` : '-',
    pass: cells.length ? bad.length === 0 : null,
  });
  const rum = cells.filter((c) => c.family === 'rumble');
  const wr = worst(rum, (c) => c.bearline.within[1]!, (a, b) => a < b);
  out.push({
    target: 'rumble cells at least 90% within 5 deg',
    measured: wr ? `${rum.filter((c) => c.bearline.within[1]! < 0.9).length} of ${rum.length} below; lowest ${wr.cell.id} ${pct(wr.v)}%, mean ${pct(mean(rum.map((c) => c.bearline.within[1]!)))}%` : '-',
    pass: rum.length ? rum.every((c) => c.bearline.within[1]! >= 0.9) : null,
  });
  const bur = cells.filter(isBurstTargetCell);
  const epc = bur.map((c) => c.eventsPerCall ?? 0);
  out.push({
    target: 'bursts at 20 dB: one event per burst (0.9 to 1.1 events per call)',
    measured: bur.length ? `${bur.filter((c) => Math.abs((c.eventsPerCall ?? 0) - 1) > 0.1).length} of ${bur.length} cells outside; range ${Math.min(...epc).toFixed(2)} to ${Math.max(...epc).toFixed(2)}` : '-',
    pass: bur.length ? bur.every((c) => Math.abs((c.eventsPerCall ?? 0) - 1) <= 0.1) : null,
  });
  const gapShare = (c: CellScore): number | null => (c.gapHops ? c.gapWithDirection! / c.gapHops : null);
  const wg = worst(bur, gapShare, (a, b) => a > b);
  out.push({
    target: 'bursts at 20 dB: gap hops with a direction under 10%',
    measured: wg ? `${bur.filter((c) => (gapShare(c) ?? 0) >= 0.1).length} of ${bur.length} cells at or above; highest ${wg.cell.id} ${pct(wg.v)}%` : '-',
    pass: wg ? bur.every((c) => (gapShare(c) ?? 0) < 0.1) : null,
  });
  const hops = cells.reduce((a, c) => a + c.hops, 0);
  const cw = hops ? cells.reduce((a, c) => a + c.confidentWrong, 0) / hops : 0;
  out.push({ target: `confident-and-wrong (confidence >= ${CONFIDENT}, > ${WRONG_DEG} deg off) under 1% of hops overall`, measured: `${pct(cw, 2)}% of ${hops} hops`, pass: hops ? cw < 0.01 : null });
  const kem = cells.filter((c) => c.family === 'kemar' && c.schedule === 'steady' && c.oneDelay !== null);
  const wk = worst(kem, (c) => c.oneDelay!.bearline, (a, b) => a < b);
  out.push({
    target: 'KEMAR steady sound keeps one delay on at least 95% of its hops',
    measured: wk ? `${kem.filter((c) => c.oneDelay!.bearline < 0.95).length} of ${kem.length} below; lowest ${wk.cell.id} ${pct(wk.v)}% (baseline there ${pct(wk.cell.oneDelay!.baseline)}%)` : '-',
    pass: kem.length ? kem.every((c) => c.oneDelay!.bearline >= 0.95) : null,
  });
  return out;
}

/** Per confidence decile: hops with a direction, their mean confidence, the observed share within 5 degrees. */
export function reliability(rows: readonly HopRow[]): ReliabilityBin[] {
  const bins = Array.from({ length: 10 }, (_, i) => ({ lo: i / 10, hi: (i + 1) / 10, n: 0, conf: 0, ok: 0 }));
  for (const r of rows) {
    if (!r.dir) continue;
    const b = bins[Math.min(9, Math.floor(r.conf * 10))]!;
    b.n++;
    b.conf += r.conf;
    if (r.err !== null && r.err <= 5) b.ok++;
  }
  return bins.map((b) => ({ lo: b.lo, hi: b.hi, hops: b.n, meanConfidence: b.n ? b.conf / b.n : null, within5: b.n ? b.ok / b.n : null }));
}

function pad(s: string, n: number, right = false): string {
  if (s.length > n) s = s.slice(0, n);
  return right ? s.padStart(n) : s.padEnd(n);
}

const COLS = 'id        family   condition                                     b2    b5   b10 | gcc5  delta | ev/call match | c-wrong  gap-dir | 1-delay gcc';

function line(id: string, family: string, condition: string, w: number[], b5: number, delta: number, epc: number | null, matched: number | null, cw: number, gap: number | null, one: number | null, oneBase: number | null): string {
  return [
    pad(id, 9),
    pad(family, 8),
    pad(condition, 44),
    ...w.map((x) => pad(pct(x), 5, true)),
    '|',
    pad(pct(b5), 5, true),
    pad(`${delta >= 0 ? '+' : ''}${pct(delta)}`, 6, true),
    '|',
    pad(epc === null ? '-' : epc.toFixed(2), 7, true),
    pad(matched === null ? '-' : `${pct(matched, 0)}%`, 5, true),
    '|',
    pad(`${pct(cw, 2)}%`, 7, true),
    pad(gap === null ? '-' : `${pct(gap)}%`, 8, true),
    '|',
    pad(one === null ? '-' : `${pct(one)}%`, 7, true),
    pad(oneBase === null ? '' : `${pct(oneBase)}%`, 6, true),
  ].join(' ');
}

export function formatTable(cells: readonly CellScore[]): string[] {
  const out = [COLS, '-'.repeat(COLS.length)];
  let fam: Family | null = null;
  for (const c of cells) {
    if (fam !== null && c.family !== fam) out.push('');
    fam = c.family;
    out.push(
      line(
        c.id,
        c.family,
        c.condition,
        c.bearline.within,
        c.baseline.within[1]!,
        c.bearline.within[1]! - c.baseline.within[1]!,
        c.eventsPerCall,
        c.calls ? c.matchedCalls / c.calls : null,
        c.hops ? c.confidentWrong / c.hops : 0,
        c.gapHops ? c.gapWithDirection! / c.gapHops : null,
        c.oneDelay?.bearline ?? null,
        c.oneDelay?.baseline ?? null,
      ),
    );
  }
  return out;
}

export function formatSummaries(sums: readonly Summary[]): string[] {
  const out = ['', 'summary (shares: mean over cells; events, confident-wrong, gaps: pooled)', COLS.replace('id       ', 'cells    '), '-'.repeat(COLS.length)];
  for (const s of sums) {
    out.push(line(String(s.cells), s.name, '', s.within, s.baselineWithin[1]!, s.delta5, s.eventsPerCall, s.matched, s.confidentWrong, s.gapWithDirection, s.oneDelay, null));
  }
  return out;
}

export function formatTargets(t: readonly TargetCheck[]): string[] {
  return ['', 'targets of issue 12 (defaults, the matrix as a whole):', ...t.map((x) => `  ${x.pass === null ? 'n/a ' : x.pass ? 'PASS' : 'MISS'}  ${x.target}: ${x.measured}`)];
}

export function formatReliability(title: string, bins: readonly ReliabilityBin[]): string[] {
  const out = ['', `reliability of confidence (${title}): hops with a direction per confidence decile (KEMAR cells left out)`, '  confidence   hops  mean conf  within 5 deg'];
  for (const b of bins) {
    out.push(`  ${b.lo.toFixed(1)}-${b.hi.toFixed(1)}  ${String(b.hops).padStart(7)}  ${b.meanConfidence === null ? '        -' : b.meanConfidence.toFixed(3).padStart(9)}  ${b.within5 === null ? '-' : `${pct(b.within5)}%`.padStart(12)}`);
  }
  return out;
}

export const DEFINITIONS = [
  'b2/b5/b10: bearline, share of calling hops within 2/5/10 deg of the call (a hop without a direction is a miss);',
  'gcc5: plain GCC-PHAT (SRP-PHAT for 3+ mics) on the same frames, within 5 deg; delta = b5 - gcc5 (points).',
  'Pairs and lines are scored against the mirror image about their axis too; planar arrays on azimuth; 3-D on the great circle.',
  `ev/call: events (less a rumble's own) per true call; match: calls matched one to one by an overlapping event within ${EVENT_DEG} deg.`,
  `c-wrong: hops with confidence >= ${CONFIDENT} more than ${WRONG_DEG} deg from every source present (from half a frame before a call to ${GRACE_S} s after it), of all hops.`,
  `gap-dir: hops more than ${GRACE_S} s after a call and before the next that carry a direction (not measured with a steady rumble).`,
  '1-delay: steady sounds and KEMAR cells, share of calling hops whose pair delay lies within the most populated +-1 sample window (bearline, then gcc).',
  'KEMAR angles are scored against the true direction: no sine-law pair matches a head at all frequencies (Woodworth), so read its 1-delay column.',
];

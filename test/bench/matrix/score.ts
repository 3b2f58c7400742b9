/**
 * Scoring one cell: bearline's hops and events and the baseline's hops against the truth of
 * the rendered scene (src/sim/truth.ts records, indexed by src/accuracy/truth.ts as
 * `bearline accuracy` does). Errors are taken as the array can resolve them (angles.ts).
 *
 * Definitions (the matrix's own; printed with the table):
 * - calling hop: a call source (not an interferer) is active at the hop's time (the truth
 *   step nearest it, as src/accuracy/score.ts). within-X: calling hops whose direction lies
 *   within X degrees of an active call source; a calling hop without a direction is a miss.
 * - a source counts as present for a hop from half a frame before its start (the frame
 *   reaches it) until GRACE_S (one memory time) after it ends; the per-hop error `err` is
 *   the angle to the nearest present source
 *   (calls and interferers such as a coherent rumble, which is a real source), null when
 *   the hop has no direction or no source is present.
 * - confident-and-wrong: a hop with a direction, confidence >= CONFIDENT, and err null or
 *   above WRONG_DEG; as a share of all hops.
 * - gap hops: hops whose time is more than GRACE_S after a call ended and whose frame ends
 *   before the next call starts; the share of them with a direction. Not measured in cells
 *   with a steady interferer (it is present in the gaps too).
 * - events: a true call (a stretch of the call source's truth) is matched by an event that
 *   overlaps it in time and lies within EVENT_DEG, one to one (largest overlap first).
 *   Events within EVENT_DEG of an interferer and matching no call are the interferer's; the
 *   rest of the unmatched events are extra. events per call = (events - interferer events) / calls.
 * - one delay (steady sounds, and every dummy-head cell): the share of calling hops whose
 *   pair-0 delay lies in the most populated window of +-1 sample (hops without a delay count
 *   against it).
 */
import { indexTruth, type TruthSource } from '../../../src/accuracy/truth.js';
import { angleError, type Ambiguity } from './angles.js';
import type { BaselineHop } from './baseline.js';
import type { Family, ScheduleKind, Split } from './corpus.js';
import type { RenderedCell, Role } from './render.js';
import type { BearlineRun, HopFeatures } from './run-bearline.js';

export const WITHIN_DEG = [2, 5, 10] as const;
export const GRACE_S = 0.15;
export const CONFIDENT = 0.6;
export const WRONG_DEG = 20;
export const EVENT_DEG = 10;

/** One hop of the per-hop dump (JSON Lines): what confidence calibration is fitted on. */
export interface HopRow {
  readonly cell: string;
  readonly split: Split;
  readonly family: Family;
  readonly t: number;
  readonly conf: number;
  /** The hop gave a direction. */
  readonly dir: boolean;
  /** Degrees to the nearest present source; null without a direction or without a present source. */
  readonly err: number | null;
  readonly calling: boolean;
  /** Confidence features of the hop (for fitting the confidence), null when it had no candidate. */
  readonly features: HopFeatures | null;
}

export interface MethodAngles {
  /** Shares of calling hops within each of WITHIN_DEG. */
  readonly within: number[];
  /** Median error over calling hops with a direction. */
  readonly medianDeg: number | null;
}

export interface CellScore {
  readonly id: string;
  readonly family: Family;
  readonly condition: string;
  readonly split: Split;
  readonly geometry: string;
  readonly schedule: ScheduleKind;
  readonly snrDb: number;
  readonly rumble: boolean;
  readonly room: boolean;
  readonly hops: number;
  readonly callingHops: number;
  readonly bearline: MethodAngles;
  readonly baseline: MethodAngles;
  readonly calls: number;
  readonly matchedCalls: number;
  readonly events: number;
  readonly interfererEvents: number;
  readonly extraEvents: number;
  readonly eventsPerCall: number | null;
  readonly confidentWrong: number;
  readonly gapHops: number | null;
  readonly gapWithDirection: number | null;
  readonly oneDelay: { readonly bearline: number; readonly baseline: number } | null;
}

interface Present {
  readonly name: string;
  readonly role: Role;
  readonly dir: { azimuthDeg: number; elevationDeg: number };
  readonly calls: readonly { startS: number; endS: number }[];
}

function median(xs: number[]): number | null {
  if (xs.length === 0) return null;
  const s = xs.slice().sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
}

/** Share of `values` in the most populated window of +-1 (values in samples; null counts against). */
export function oneDelayShare(values: readonly (number | null)[]): number {
  if (values.length === 0) return 0;
  const d = values.filter((v): v is number => v !== null).sort((a, b) => a - b);
  let best = 0;
  let lo = 0;
  for (let hi = 0; hi < d.length; hi++) {
    while (d[hi]! - d[lo]! > 2) lo++;
    best = Math.max(best, hi - lo + 1);
  }
  return best / values.length;
}

function presentSources(sources: readonly TruthSource[], roles: Record<string, Role>): Present[] {
  return sources.map((s) => ({
    name: s.name,
    role: roles[s.name] ?? 'call',
    dir: { azimuthDeg: s.records[0]!.azimuth_deg, elevationDeg: s.records[0]!.elevation_deg },
    calls: s.calls,
  }));
}

/** A source is present for a hop whose frame reaches its start, until GRACE_S after it ends. */
function isPresent(p: Present, t: number, frameS: number): boolean {
  return p.calls.some((c) => t >= c.startS - frameS / 2 && t <= c.endS + GRACE_S);
}

export function scoreCell(r: RenderedCell, run: BearlineRun, base: readonly BaselineHop[], amb: Ambiguity): { score: CellScore; rows: HopRow[] } {
  const cell = r.cell;
  const truth = indexTruth(r.truth);
  const present = presentSources(truth.sources, r.roles);
  const callers = present.filter((p) => p.role === 'call');
  const interferers = present.filter((p) => p.role === 'interferer');
  const callingError = (t: number, est: { azimuthDeg: number; elevationDeg: number | null } | null): { calling: boolean; err: number | null } => {
    const active = truth.activeAt(t).filter((rec) => (r.roles[rec.source] ?? 'call') === 'call');
    if (active.length === 0) return { calling: false, err: null };
    if (!est) return { calling: true, err: null };
    let err = Infinity;
    for (const rec of active) err = Math.min(err, angleError(est, { azimuthDeg: rec.azimuth_deg, elevationDeg: rec.elevation_deg }, amb));
    return { calling: true, err };
  };
  const angles = (errs: (number | null)[]): MethodAngles => ({
    within: WITHIN_DEG.map((deg) => (errs.length ? errs.filter((e) => e !== null && e <= deg).length / errs.length : 0)),
    medianDeg: median(errs.filter((e): e is number => e !== null)),
  });

  const rows: HopRow[] = [];
  const blErrs: (number | null)[] = [];
  const blDelays: (number | null)[] = [];
  let confidentWrong = 0;
  const frameS = run.frame / r.sampleRate;
  const gaps: [number, number][] = [];
  if (interferers.length === 0) {
    for (const c of callers) for (let i = 0; i + 1 < c.calls.length; i++) gaps.push([c.calls[i]!.endS + GRACE_S, c.calls[i + 1]!.startS]);
  }
  let gapHops = 0;
  let gapWithDirection = 0;
  for (const h of run.hops) {
    const est = h.az === null ? null : { azimuthDeg: h.az, elevationDeg: h.el };
    const c = callingError(h.t, est);
    if (c.calling) {
      blErrs.push(c.err);
      blDelays.push(h.tdoa0 === null ? null : h.tdoa0 * r.sampleRate);
    }
    let err: number | null = null;
    if (est) {
      for (const p of present) if (isPresent(p, h.t, frameS)) err = Math.min(err ?? Infinity, angleError(est, p.dir, amb));
      if (h.conf >= CONFIDENT && (err === null || err > WRONG_DEG)) confidentWrong++;
    }
    if (gaps.some(([a, b]) => h.t > a && h.t + frameS / 2 < b)) {
      gapHops++;
      if (est) gapWithDirection++;
    }
    rows.push({ cell: cell.id, split: cell.split, family: cell.family, t: h.t, conf: h.conf, dir: est !== null, err: err === null ? null : Math.round(err * 1000) / 1000, calling: c.calling, features: h.features });
  }
  const baseErrs: (number | null)[] = [];
  const baseDelays: number[] = [];
  for (const h of base) {
    const c = callingError(h.t, { azimuthDeg: h.az, elevationDeg: h.el });
    if (c.calling) {
      baseErrs.push(c.err);
      baseDelays.push(h.tdoa0 * r.sampleRate);
    }
  }

  // Events against the true calls, one to one by largest overlap.
  const trueCalls = callers.flatMap((p) => p.calls.map((c) => ({ ...c, dir: p.dir })));
  const candidates: { call: number; event: number; overlap: number }[] = [];
  run.events.forEach((e, ei) => {
    trueCalls.forEach((c, ci) => {
      const overlap = Math.min(e.end, c.endS) - Math.max(e.start, c.startS);
      if (overlap > 0 && angleError({ azimuthDeg: e.az, elevationDeg: e.el }, c.dir, amb) <= EVENT_DEG) candidates.push({ call: ci, event: ei, overlap });
    });
  });
  candidates.sort((a, b) => b.overlap - a.overlap);
  const callTaken = new Set<number>();
  const eventTaken = new Set<number>();
  for (const m of candidates) {
    if (callTaken.has(m.call) || eventTaken.has(m.event)) continue;
    callTaken.add(m.call);
    eventTaken.add(m.event);
  }
  let interfererEvents = 0;
  run.events.forEach((e, ei) => {
    if (eventTaken.has(ei)) return;
    if (interferers.some((p) => angleError({ azimuthDeg: e.az, elevationDeg: e.el }, p.dir, amb) <= EVENT_DEG)) interfererEvents++;
  });
  const events = run.events.length;
  const oneDelayToo = cell.schedule === 'steady' || cell.geometry === 'kemar';
  const score: CellScore = {
    id: cell.id,
    family: cell.family,
    condition: cell.condition,
    split: cell.split,
    geometry: cell.geometry,
    schedule: cell.schedule,
    snrDb: cell.snrDb,
    rumble: cell.rumble !== null,
    room: cell.room !== null,
    hops: run.hops.length,
    callingHops: blErrs.length,
    bearline: angles(blErrs),
    baseline: angles(baseErrs),
    calls: trueCalls.length,
    matchedCalls: callTaken.size,
    events,
    interfererEvents,
    extraEvents: events - eventTaken.size - interfererEvents,
    eventsPerCall: trueCalls.length ? (events - interfererEvents) / trueCalls.length : null,
    confidentWrong,
    gapHops: interferers.length === 0 ? gapHops : null,
    gapWithDirection: interferers.length === 0 ? gapWithDirection : null,
    oneDelay: oneDelayToo ? { bearline: oneDelayShare(blDelays), baseline: oneDelayShare(baseDelays) } : null,
  };
  return { score, rows };
}

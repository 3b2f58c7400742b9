/**
 * The truth of a rendered scene (REC.truth.jsonl of `bearline simulate`, src/sim/truth.ts):
 * parsed and indexed by time step, so that the sources active at a hop are found in one look.
 * Pure: text in, records out; errors name the line.
 */
import { UsageError } from '../util/errors.js';
import { TRUTH_STEP_S, type TruthRecord } from '../sim/truth.js';

export { TRUTH_STEP_S, type TruthRecord };

/** One source of the truth file: its records in time order, and whether it stayed put. */
export interface TruthSource {
  readonly name: string;
  /** True when every record gives the same direction (to 0.01 degree): a fixed source. */
  readonly fixed: boolean;
  /** Records of this source (time order). */
  readonly records: readonly TruthRecord[];
  /** Stretches of consecutive steps with this source active ("calls" as they reach the array), seconds. */
  readonly calls: readonly { startS: number; endS: number }[];
}

export interface TruthIndex {
  readonly sources: readonly TruthSource[];
  /** Records active at a time (the truth step nearest to it); empty when none. */
  activeAt(timeS: number): readonly TruthRecord[];
}

function fail(where: string, line: number, what: string): never {
  throw new UsageError(`${where} line ${line}: ${what}; it should be a truth file written by bearline simulate`);
}

/** Parse JSON Lines truth records; `where` names the file in errors. */
export function parseTruth(text: string, where: string): TruthRecord[] {
  const out: TruthRecord[] = [];
  text.split('\n').forEach((raw, i) => {
    const line = raw.trim();
    if (line === '') return;
    let v: unknown;
    try {
      v = JSON.parse(line);
    } catch {
      fail(where, i + 1, 'is not valid JSON');
    }
    if (typeof v !== 'object' || v === null || Array.isArray(v)) fail(where, i + 1, 'is not a JSON object');
    const o = v as Record<string, unknown>;
    for (const k of ['time_s', 'azimuth_deg', 'elevation_deg'] as const) {
      if (typeof o[k] !== 'number' || !Number.isFinite(o[k])) fail(where, i + 1, `has no number "${k}"`);
    }
    if (typeof o.source !== 'string' || o.source === '') fail(where, i + 1, 'has no "source" name');
    out.push({ time_s: o.time_s as number, source: o.source, azimuth_deg: o.azimuth_deg as number, elevation_deg: o.elevation_deg as number });
  });
  return out;
}

const stepOf = (t: number): number => Math.round(t / TRUTH_STEP_S);

export function indexTruth(records: readonly TruthRecord[]): TruthIndex {
  const bySource = new Map<string, TruthRecord[]>();
  const byStep = new Map<number, TruthRecord[]>();
  for (const r of records) {
    let list = bySource.get(r.source);
    if (!list) bySource.set(r.source, (list = []));
    list.push(r);
    const k = stepOf(r.time_s);
    let at = byStep.get(k);
    if (!at) byStep.set(k, (at = []));
    at.push(r);
  }
  const sources: TruthSource[] = [];
  for (const [name, list] of bySource) {
    list.sort((a, b) => a.time_s - b.time_s);
    const first = list[0]!;
    const fixed = list.every((r) => Math.abs(r.azimuth_deg - first.azimuth_deg) < 0.01 && Math.abs(r.elevation_deg - first.elevation_deg) < 0.01);
    const calls: { startS: number; endS: number }[] = [];
    let prev = -Infinity;
    for (const r of list) {
      const k = stepOf(r.time_s);
      if (k === prev + 1) calls[calls.length - 1]!.endS = r.time_s + TRUTH_STEP_S;
      else calls.push({ startS: r.time_s, endS: r.time_s + TRUTH_STEP_S });
      prev = k;
    }
    sources.push({ name, fixed, records: list, calls });
  }
  const none: TruthRecord[] = [];
  return { sources, activeAt: (t) => byStep.get(stepOf(t)) ?? none };
}

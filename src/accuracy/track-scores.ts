/**
 * Multi-target tracking measures of a scan against a scene's truth (common practice in
 * multi-target tracking evaluation, no single source): per track its purity (the share of its
 * attributed events that come from its main source), per source its completeness (the share
 * of its calls that have an event on its main track) and its id switches (changes of track
 * id between consecutive attributed events of the source). Each call not on the main track is
 * also told by what its time holds: an event of the source on another of its tracks, only
 * events attributed to another source (heard together, that one's direction won), only events
 * attributed to no source (a direction between or beside the callers), or no event at all.
 *
 * An event is attributed to a source when exactly one source that is active during it lies
 * within toleranceDeg of its azimuth and no other source (calling or between calls, within its
 * time in the scene) lies that close then. An event that two sources lie that close to (two
 * callers crossing each other's bearing) goes to the source its track's last attributed event
 * came from, when that source is active during it and within toleranceDeg: the correspondence
 * is kept while it stays valid, the rule of the CLEAR MOT measures (Bernardin and
 * Stiefelhagen, "Evaluating multiple object tracking performance: the CLEAR MOT metrics",
 * EURASIP Journal on Image and Video Processing, 2008; the rule as recalled, from memory).
 * Without it a caller whose events stay exactly on its bearing through a crossing is scored as
 * missing every call made within toleranceDeg of the other's (11 % of the calls of a crossing
 * source on average over the motion matrix' crossings; { keepCorrespondence: false } scores
 * that way). Other events (ghosts, a direction between or beside the callers) are left out, and
 * a swap of ids at a crossing still counts: the first event past it lies near one source only.
 * An event shorter than the truth's step (a bat's call of a few ms) is compared over its time
 * widened by half a step either side: the truth holds a call only at the steps within it, so a
 * call between two steps is at the nearer one, and the event of it missed the step by up to one
 * (motion matrix, bats family, 12 draws: calls on their bat's main track 2311 -> 2374 of 2587,
 * calls with only events of no source 156 -> 93; visible id switches 9 -> 16). Events of a step
 * or more (every event of the audio profiles: a hop is 10.7 ms or more) are scored as before.
 * Pure: records in, figures out.
 */
import type { EventRecord } from '../records/record-types.js';
import { angleDiffDeg } from '../track/circular.js';
import { truthAzimuthDuring } from './track-match.js';
import type { TruthIndex } from './truth.js';

export interface TrackPurity {
  track: number;
  /** Events attributed to some source. */
  attributed: number;
  /** The source most of them come from, and the share they make. */
  source: string | null;
  purity: number;
}

export interface SourceCompleteness {
  source: string;
  calls: number;
  /** The track most of its attributed events are on (null when none). */
  track: number | null;
  /** Calls with an attributed event on that track, over all its calls. */
  completeness: number;
  idSwitches: number;
  /** The calls not on the main track, by what their time holds (see above). */
  missed: MissedCalls;
}

export interface MissedCalls {
  otherTrack: number;
  otherSource: number;
  unattributed: number;
  none: number;
}

export interface TrackScores {
  tracks: TrackPurity[];
  sources: SourceCompleteness[];
  /** Events attributed to a source, over all events. */
  attributedShare: number;
}

/** The time an event is scored over (see above): its own, or for an event shorter than `step` half a step more either side. */
function scoredSpan(e: EventRecord, step: number): [number, number] {
  return e.end_s - e.start_s < step ? [e.start_s - step / 2, e.end_s + step / 2] : [e.start_s, e.end_s];
}

/**
 * The source an event is attributed to (see above), or null. `kept`: the source the event's
 * track was last attributed to (the correspondence the CLEAR MOT rule keeps), or null.
 */
export function attributeEvent(truth: TruthIndex, e: EventRecord, step: number, toleranceDeg: number, kept: string | null = null): string | null {
  const near = new Set<string>();
  const [from, to] = scoredSpan(e, step);
  for (let t = from; t <= to + 1e-9; t += step) {
    for (const r of truth.activeAt(t)) if (Math.abs(angleDiffDeg(e.azimuth_deg, r.azimuth_deg)) <= toleranceDeg) near.add(r.source);
  }
  if (kept !== null && near.has(kept)) return kept;
  if (near.size !== 1) return null;
  const [only] = near;
  const crowded = truth.sources.some(
    (src) =>
      src.name !== only &&
      src.records.length > 0 &&
      src.records[0]!.time_s <= to &&
      src.records[src.records.length - 1]!.time_s >= from &&
      Math.abs(angleDiffDeg(e.azimuth_deg, truthAzimuthDuring(src, from, to))) <= toleranceDeg,
  );
  return crowded ? null : only!;
}

export interface ScoreOptions {
  /** Events near two sources go to their track's last source (CLEAR MOT's kept correspondence; default true). */
  keepCorrespondence?: boolean;
}

function majority<T>(values: readonly T[]): { value: T | null; count: number } {
  const counts = new Map<T, number>();
  for (const v of values) counts.set(v, (counts.get(v) ?? 0) + 1);
  let value: T | null = null;
  let count = 0;
  for (const [k, n] of counts) if (n > count) [value, count] = [k, n];
  return { value, count };
}

export function scoreTracks(events: readonly EventRecord[], truth: TruthIndex, step: number, toleranceDeg = 5, options: ScoreOptions = {}): TrackScores {
  const keep = options.keepCorrespondence ?? true;
  const sorted = events.slice().sort((a, b) => a.start_s - b.start_s);
  const lastOfTrack = new Map<number, string>();
  const attributed: { e: EventRecord; source: string }[] = [];
  for (const e of sorted) {
    const source = attributeEvent(truth, e, step, toleranceDeg, keep ? (lastOfTrack.get(e.track) ?? null) : null);
    if (source === null) continue;
    lastOfTrack.set(e.track, source);
    attributed.push({ e, source });
  }
  const trackIds = [...new Set(sorted.map((e) => e.track))].sort((a, b) => a - b);
  const tracks = trackIds.map((track) => {
    const mine = attributed.filter((x) => x.e.track === track);
    const top = majority(mine.map((x) => x.source));
    return { track, attributed: mine.length, source: top.value, purity: mine.length ? top.count / mine.length : 1 };
  });
  // Each event's scored span, worked out once: the calls of every source are compared with every event.
  const spans = new Map(sorted.map((e) => [e, scoredSpan(e, step)] as const));
  const during = (e: EventRecord, c: { startS: number; endS: number }): boolean => {
    const [from, to] = spans.get(e)!;
    return from < c.endS && to > c.startS;
  };
  const sources = truth.sources.map((src) => {
    const mine = attributed.filter((x) => x.source === src.name);
    const main = majority(mine.map((x) => x.e.track)).value;
    let idSwitches = 0;
    for (let i = 1; i < mine.length; i++) if (mine[i]!.e.track !== mine[i - 1]!.e.track) idSwitches++;
    const missed: MissedCalls = { otherTrack: 0, otherSource: 0, unattributed: 0, none: 0 };
    let found = 0;
    for (const c of src.calls) {
      if (mine.some((x) => x.e.track === main && during(x.e, c))) found++;
      else if (mine.some((x) => during(x.e, c))) missed.otherTrack++;
      else if (attributed.some((x) => during(x.e, c))) missed.otherSource++;
      else if (sorted.some((e) => during(e, c))) missed.unattributed++;
      else missed.none++;
    }
    return { source: src.name, calls: src.calls.length, track: main, completeness: src.calls.length ? found / src.calls.length : 1, idSwitches, missed };
  });
  return { tracks, sources, attributedShare: sorted.length ? attributed.length / sorted.length : 1 };
}

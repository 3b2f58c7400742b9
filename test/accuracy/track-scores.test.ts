/**
 * The tracking measures of src/accuracy/track-scores.ts on a hand-made truth and scan: track
 * purity, completeness and id switches as used in multi-target tracking evaluation (common
 * practice, no single source), and the breakdown of the calls missed by a source's main track.
 */
import { describe, expect, it } from 'vitest';
import { scoreTracks } from '../../src/accuracy/track-scores.js';
import { indexTruth, TRUTH_STEP_S, type TruthRecord } from '../../src/accuracy/truth.js';
import type { EventRecord } from '../../src/records/record-types.js';

/** A source calling at a fixed azimuth over [a, b) seconds, one record per truth step. */
function call(source: string, az: number, a: number, b: number): TruthRecord[] {
  const out: TruthRecord[] = [];
  for (let t = a; t < b - 1e-9; t += TRUTH_STEP_S) out.push({ time_s: Math.round(t * 100) / 100, source, azimuth_deg: az, elevation_deg: 0 });
  return out;
}
const event = (start: number, end: number, az: number, track: number): EventRecord => ({ start_s: start, end_s: end, azimuth_deg: az, spread_deg: 1, confidence: 1, track });

describe('track scores: completeness and where the missed calls went', () => {
  // frog at 40 deg calls five times; heron at -60 deg calls once, over the frog's third call
  const truth = indexTruth([
    ...call('frog', 40, 0, 0.3),
    ...call('frog', 40, 1, 1.3),
    ...call('frog', 40, 2, 2.3),
    ...call('frog', 40, 3, 3.3),
    ...call('frog', 40, 4, 4.3),
    ...call('heron', -60, 2, 2.4),
  ]);
  const events = [
    event(0.02, 0.28, 40.5, 1), // frog, main track
    event(1.02, 1.28, 39.5, 1), // frog, main track
    event(2.02, 2.38, -59, 2), // only the heron heard during the frog's third call
    event(3.02, 3.28, 41, 3), // frog on another track
    event(4.02, 4.28, 55, 1), // 15 deg off: no source's
  ];
  const s = scoreTracks(events, truth, TRUTH_STEP_S);
  const frog = s.sources.find((x) => x.source === 'frog')!;

  it('completeness counts calls with an event on the main track (2 of 5); id switches count track changes between its events', () => {
    expect(frog.calls).toBe(5);
    expect(frog.track).toBe(1);
    expect(frog.completeness).toBeCloseTo(2 / 5, 12);
    expect(frog.idSwitches).toBe(1);
  });

  it('the three missed calls: one on another track, one with only the other source heard, one with an event of no source', () => {
    expect(frog.missed).toEqual({ otherTrack: 1, otherSource: 1, unattributed: 1, none: 0 });
    const heron = s.sources.find((x) => x.source === 'heron')!;
    expect(heron.completeness).toBe(1);
    expect(heron.missed).toEqual({ otherTrack: 0, otherSource: 0, unattributed: 0, none: 0 });
  });

  it('a call with no event at all is counted as such', () => {
    const s2 = scoreTracks(events.slice(0, 2), truth, TRUTH_STEP_S);
    expect(s2.sources.find((x) => x.source === 'frog')!.missed).toEqual({ otherTrack: 0, otherSource: 0, unattributed: 0, none: 3 });
  });
});

describe('track scores: two callers crossing each other bearing (CLEAR MOT kept correspondence)', () => {
  // Rule: Bernardin and Stiefelhagen 2008, the CLEAR MOT measures (from memory): a track's
  // correspondence with a source is kept while it stays within the threshold. Two callers at
  // -20 -> 20 and 20 -> -20 deg over 8 s, calling every second: within 5 deg of each other at
  // 3.5 and 4.5 s (calls at 3.5-3.8 s and 4.0-4.3 s hold both within 5 deg).
  const azA = (t: number): number => -20 + 5 * t;
  const azB = (t: number): number => 20 - 5 * t;
  const records: TruthRecord[] = [];
  const starts = [0, 1, 2, 3, 3.5, 4, 5, 6, 7];
  for (const [source, az] of [['a', azA], ['b', azB]] as const) {
    for (const s0 of starts) {
      for (let t = s0; t < s0 + 0.3 - 1e-9; t += TRUTH_STEP_S) {
        const tt = Math.round(t * 100) / 100;
        records.push({ time_s: tt, source, azimuth_deg: az(tt), elevation_deg: 0 });
      }
    }
  }
  const truth = indexTruth(records.sort((x, y) => x.time_s - y.time_s));
  const exact = (az: (t: number) => number, track: number, swapAt = Infinity, other = 0): EventRecord[] =>
    starts.map((s0) => event(s0, s0 + 0.29, az(s0 + 0.145), s0 >= swapAt ? other : track));

  it('a scan whose tracks stay on their callers: every call counted with the rule kept, calls near the crossing lost without it', () => {
    const events = [...exact(azA, 1), ...exact(azB, 2)];
    const kept = scoreTracks(events, truth, TRUTH_STEP_S);
    const strict = scoreTracks(events, truth, TRUTH_STEP_S, 5, { keepCorrespondence: false });
    for (const name of ['a', 'b']) {
      const k = kept.sources.find((x) => x.source === name)!;
      expect(k.completeness).toBe(1);
      expect(k.idSwitches).toBe(0);
      // the calls at 3.5 and 4.0 s lie within 5 deg of the other caller's bearing
      expect(strict.sources.find((x) => x.source === name)!.completeness).toBeCloseTo(7 / 9, 12);
    }
  });

  it('tracks that swap callers at the crossing still count one id switch each, and no event joins a source its track was not on', () => {
    // track 1 follows a until 4 s, then b; track 2 the other way round
    const events = [...exact(azA, 1, 5, 2), ...exact(azB, 2, 5, 1)];
    const s = scoreTracks(events, truth, TRUTH_STEP_S);
    for (const name of ['a', 'b']) expect(s.sources.find((x) => x.source === name)!.idSwitches).toBe(1);
    for (const t of s.tracks) expect(t.purity).toBeLessThan(1);
  });

  it('an event between the two callers, near neither, stays unattributed', () => {
    const events = [...exact(azA, 1), event(6, 6.29, 0, 2)];
    const s = scoreTracks(events, truth, TRUTH_STEP_S);
    expect(s.tracks.find((t) => t.track === 2)!.attributed).toBe(0);
    expect(s.tracks.find((t) => t.track === 1)!.attributed).toBe(starts.length);
  });
});

describe('track scores: events shorter than the truth step (calls of a few ms)', () => {
  // A 5 ms call that reached the array over 0.7652-0.7702 s is in the truth at the one step inside
  // it (0.77); its event, from the hops around it, ends at 0.7695, before that step.
  const truth = indexTruth([...call('bat', 30, 0.77, 0.775), ...call('bat', 33, 0.85, 0.855)]);
  it('are compared over half a step more either side: the event of the call counts, one a step and a half away does not', () => {
    const s = scoreTracks([event(0.76, 0.7695, 30.2, 1), event(0.865, 0.87, 33.1, 1)], truth, TRUTH_STEP_S);
    const bat = s.sources[0]!;
    expect(bat.calls).toBe(2);
    expect(bat.completeness).toBeCloseTo(1 / 2, 12);
    expect(bat.missed.none).toBe(1);
    expect(s.attributedShare).toBeCloseTo(1 / 2, 12);
  });
});

/**
 * Tracker logic on synthetic hop sequences generated here from a known ground truth (source
 * directions, calling schedules) with bearing noise, clutter and dropouts (synth.ts). The
 * ground truth is the reference; the acoustic end-to-end checks come with the analysis core.
 */
import { fileURLToPath } from 'node:url';
import { beforeAll, describe, expect, it } from 'vitest';
import type { EventRecord } from '../../src/records/record-types.js';
import { angleDiffDeg } from '../../src/track/circular.js';
import { PROFILE_SECTIONS } from '../../src/cli/analysis-flags.js';
import { loadProfile, profileValues } from '../../src/options/profile.js';
import type { TrackerSettings } from '../../src/track/options.js';
import { Tracker } from '../../src/track/tracker.js';
import { pairGeometry, type ArrayGeometry } from '../../src/geometry/array-geometry.js';
import { arrayMirror, type ArrayMirror } from '../../src/geometry/array-mirror.js';
import { loadGeometryFile } from '../../src/geometry/geometry-file.js';
import { bursts, fold, foldAbout, generateHops, type Synth, type TruthSource } from './synth.js';

/** The tracker section of a shipped profile, read as bearline reads it. */
function trackerProfile(name: string): TrackerSettings {
  const dir = fileURLToPath(new URL('../../configs/profiles/', import.meta.url));
  return profileValues<TrackerSettings>(loadProfile(name, dir, PROFILE_SECTIONS), 'tracker');
}

/** The mirror the pipeline derives for an array (src/geometry/array-mirror.ts). */
function mirrorOf(g: ArrayGeometry): ArrayMirror {
  const m = arrayMirror(g);
  if (m === null) throw new Error(`${g.name} has no mirror`);
  return m;
}
const pairAlong = (name: string, a: readonly [number, number, number]): ArrayGeometry => ({
  name,
  headingDeg: null,
  mics: [
    { channel: 0, position: [-a[0] / 2, -a[1] / 2, -a[2] / 2] },
    { channel: 1, position: [a[0] / 2, a[1] / 2, a[2] / 2] },
  ],
});
const PAIR_X_MIRROR = mirrorOf(pairGeometry(0.2));

interface Run {
  events: EventRecord[];
  /** Per hop, per candidate: the track id the tracker gave it. */
  ids: (number | null)[][];
  tracker: Tracker;
}

function run(synth: Synth, options: TrackerSettings = {}): Run {
  const tracker = new Tracker(options);
  const events: EventRecord[] = [];
  const ids: (number | null)[][] = [];
  for (const hop of synth.hops) {
    const u = tracker.update(hop);
    ids.push(u.trackIds.slice());
    events.push(...u.events);
  }
  events.push(...tracker.finish());
  return { events, ids, tracker };
}

/** The track ids given to one source's candidates, hop by hop (null where unassigned). */
function idsOfSource(synth: Synth, r: Run, source: number): { t: number; id: number | null }[] {
  const out: { t: number; id: number | null }[] = [];
  synth.labels.forEach((labels, k) => {
    labels.forEach((label, j) => {
      if (label === source) out.push({ t: synth.hops[k]!.timeS, id: r.ids[k]![j]! });
    });
  });
  return out;
}

function majority(values: readonly (number | null)[]): number | null {
  const counts = new Map<number, number>();
  for (const v of values) if (v !== null) counts.set(v, (counts.get(v) ?? 0) + 1);
  let best: number | null = null;
  for (const [k, n] of counts) if (best === null || n > counts.get(best)!) best = k;
  return best;
}

interface CallMatch {
  source: number;
  call: readonly [number, number];
  event: EventRecord | null;
}

/** Each true call with the event that overlaps it most (among the events of trackOf[source], when given). */
function matchCalls(sources: readonly TruthSource[], events: readonly EventRecord[], trackOf?: readonly (number | null)[]): CallMatch[] {
  const out: CallMatch[] = [];
  sources.forEach((s, source) => {
    for (const call of s.calls) {
      let best: EventRecord | null = null;
      let bestOverlap = 0;
      for (const e of events) {
        if (trackOf !== undefined && e.track !== trackOf[source]) continue;
        const overlap = Math.min(e.end_s, call[1]) - Math.max(e.start_s, call[0]);
        if (overlap > bestOverlap) {
          best = e;
          bestOverlap = overlap;
        }
      }
      out.push({ source, call, event: best });
    }
  });
  return out;
}

describe('two static sources calling in alternating bursts (ground truth: synth.ts)', () => {
  // A frog at -40 deg and another at +65 deg, 0.3 s calls, alternating, 60 s; 2 deg bearing
  // noise, a clutter candidate in 30 % of hops, 10 % of calling hops without a candidate.
  const sources: TruthSource[] = [
    { azimuthAt: () => -40, calls: bursts(0.2, 0.3, 0.7, 60), levelDbfs: -30 },
    { azimuthAt: () => 65, calls: bursts(0.7, 0.3, 0.7, 60), levelDbfs: -34 },
  ];
  let synth: ReturnType<typeof generateHops>;
  let r: ReturnType<typeof run>;
  let matches: ReturnType<typeof matchCalls>;
  let idOf: (number | null)[];
  beforeAll(() => {
    synth = generateHops(sources, { durationS: 60, hopS: 0.01, seed: 3, noiseDeg: 2, clutter: 0.3, dropout: 0.1 });
    r = run(synth);
    matches = matchCalls(sources, r.events);
    idOf = [0, 1].map((i) => majority(matches.filter((m) => m.source === i).map((m) => m.event?.track ?? null)));
  });

  it('gives each source its own track and >= 95 % of events the right id', () => {
    expect(idOf[0]).not.toBeNull();
    expect(idOf[1]).not.toBeNull();
    expect(idOf[0]).not.toBe(idOf[1]);
    const right = matches.filter((m) => m.event !== null && m.event.track === idOf[m.source]).length;
    expect(right / matches.length).toBeGreaterThanOrEqual(0.95);
    // One event per call, no spurious ones from clutter.
    expect(r.events.length).toBeGreaterThanOrEqual(matches.length * 0.95);
    expect(r.events.length).toBeLessThanOrEqual(matches.length * 1.05);
  });

  it('puts event bearings within 2 deg and start/end within 20 ms of the truth', () => {
    let good = 0;
    for (const m of matches) {
      const e = m.event;
      if (e === null) continue;
      const truth = sources[m.source]!.azimuthAt((m.call[0] + m.call[1]) / 2);
      const ok =
        Math.abs(angleDiffDeg(e.azimuth_deg, truth)) <= 2 &&
        Math.abs(e.start_s - m.call[0]) <= 0.02 &&
        Math.abs(e.end_s - m.call[1]) <= 0.02;
      if (ok) good++;
    }
    expect(good / matches.length).toBeGreaterThanOrEqual(0.95);
  });

  it('reports spread, confidence, peak level, band and no mirror flag', () => {
    // The hop bearings carry 2 deg Gaussian noise, so the median event's circular sd is near
    // 2 deg (for small spreads the circular sd approaches the linear one; Mardia and Jupp 2000).
    const spreads = r.events.map((e) => e.spread_deg).sort((a, b) => a - b);
    const median = spreads[Math.floor(spreads.length / 2)]!;
    expect(median).toBeGreaterThan(1.6);
    expect(median).toBeLessThan(2.4);
    for (const e of r.events) {
      expect(e.confidence).toBeGreaterThan(0.3);
      expect(e.confidence).toBeLessThanOrEqual(1);
      expect(e.peak_dbfs).toBeGreaterThan(-40);
      expect(e.band_hz).toEqual([1000, 2000]);
      expect(e.mirror).toBeUndefined();
      expect(e.end_s).toBeGreaterThan(e.start_s);
    }
  });

  it('sums each track up: events, mean azimuth, active time', () => {
    const summary = r.tracker.summary();
    expect(summary.length).toBe(2);
    for (const [i, truth] of [[0, -40], [1, 65]] as const) {
      const s = summary.find((x) => x.track === idOf[i])!;
      expect(Math.abs(angleDiffDeg(s.azimuthDeg, truth))).toBeLessThan(1);
      expect(s.events).toBe(r.events.filter((e) => e.track === s.track).length);
      // 60 calls of 0.3 s each
      expect(s.activeS).toBeGreaterThan(0.9 * 60 * 0.3);
      expect(s.activeS).toBeLessThan(1.1 * 60 * 0.3);
      expect(s.alive).toBe(false);
    }
  });

  it('labels hops: a source candidate carries its track id', () => {
    for (const i of [0, 1]) {
      const seq = idsOfSource(synth, r, i);
      const right = seq.filter((x) => x.id === idOf[i]).length;
      // The first hops of a new track are tentative (no id yet): M of N = 3 of 5.
      expect(right / seq.length).toBeGreaterThan(0.95);
    }
  });

  it('is deterministic: the same hops give the same events', () => {
    expect(run(synth).events).toEqual(r.events);
  });
});

describe('a source moving across the +-180 seam keeps one id', () => {
  // A bird flying behind the array from 150 deg through 180 to -150 deg at 20 deg/s.
  const sources: TruthSource[] = [{ azimuthAt: (t) => 150 + 20 * t, calls: bursts(0.1, 0.25, 0.15, 3.1), levelDbfs: -32 }];
  for (const seed of [1, 2, 3, 4, 5]) {
    it(`seed ${seed}`, () => {
      const synth = generateHops(sources, { durationS: 3.1, hopS: 0.01, seed, noiseDeg: 1.5, clutter: 0.2, dropout: 0.1 });
      const r = run(synth, { rateWanderDegS: 20 });
      const ids = new Set(r.events.map((e) => e.track));
      expect(ids.size).toBe(1);
      const matches = matchCalls(sources, r.events);
      expect(matches.every((m) => m.event !== null)).toBe(true);
      for (const m of matches) {
        const truth = sources[0]!.azimuthAt((m.call[0] + m.call[1]) / 2);
        expect(Math.abs(angleDiffDeg(m.event!.azimuth_deg, truth))).toBeLessThan(2);
      }
      // The circular mean keeps the seam: some events sit at +170..180, others at -180..-170.
      expect(r.events.some((e) => e.azimuth_deg > 170)).toBe(true);
      expect(r.events.some((e) => e.azimuth_deg < -170)).toBe(true);
    });
  }
});

interface Crossing {
  name: string;
  a: (t: number) => number;
  b: (t: number) => number;
  /** Closer than this (deg) the two give one merged candidate. */
  mergeDeg: number;
}

/** Birds meeting head-on: A from -40 deg at +20 deg/s, B from +30 deg at -10 deg/s, meeting at t = 7/3 s. */
const headOn: Crossing = { name: 'head-on', a: (t) => -40 + 20 * t, b: (t) => 30 - 10 * t, mergeDeg: 4 };
/** A overtaking B: A from -40 deg at +25 deg/s, B from -10 deg at +10 deg/s, level at t = 2 s; merged within 6 deg (0.8 s). */
const overtaking: Crossing = { name: 'overtaking', a: (t) => -40 + 25 * t, b: (t) => -10 + 10 * t, mergeDeg: 6 };

/**
 * Swap: the track that held A before the crossing (1.0-1.8 s) holds B after it (3.0-4.5 s).
 * Lost: an id changed otherwise (a new track took over).
 */
function crossingSwapRate(c: Crossing, seeds: number, options: TrackerSettings): { swaps: number; lost: number; runs: number } {
  const sources: TruthSource[] = [
    { azimuthAt: c.a, calls: [[0, 5]], levelDbfs: -30 },
    { azimuthAt: c.b, calls: [[0, 5]], levelDbfs: -31 },
  ];
  let swaps = 0;
  let lost = 0;
  for (let seed = 1; seed <= seeds; seed++) {
    const synth = generateHops(sources, { durationS: 5, hopS: 0.01, seed, noiseDeg: 1.5, clutter: 0.1, dropout: 0.1, mergeDeg: c.mergeDeg });
    const r = run(synth, options);
    const before = [0, 1].map((i) => majority(idsOfSource(synth, r, i).filter((x) => x.t > 1 && x.t < 1.8).map((x) => x.id)));
    const after = [0, 1].map((i) => majority(idsOfSource(synth, r, i).filter((x) => x.t > 3 && x.t < 4.5).map((x) => x.id)));
    if (before[0] === after[1] && before[1] === after[0]) swaps++;
    else if (before[0] !== after[0] || before[1] !== after[1]) lost++;
  }
  return { swaps, lost, runs: seeds };
}

describe('two crossing sources at different angular rates (40 noisy runs each)', () => {
  const birds = trackerProfile('passing-birds');
  it.each([
    [headOn, 'the defaults', {}],
    [headOn, 'the passing-birds profile', birds],
    [overtaking, 'the defaults', {}],
    [overtaking, 'the passing-birds profile', birds],
  ])('%s crossing keeps its ids with %s in >= 90 % of runs (swap rate printed)', (c, label, options) => {
    const result = crossingSwapRate(c, 40, options);
    console.log(`${c.name} crossing with ${label}: ${result.swaps} swaps, ${result.lost} lost ids in ${result.runs} runs`);
    expect((result.swaps + result.lost) / result.runs).toBeLessThanOrEqual(0.1);
  });

  it('swaps far more often when the rate is allowed to wander fast: the rate model is what carries them', () => {
    // With rateWander 10 and rateMemory 3 the pair swapped in 12 of 40 runs while readings of two
    // callers within 40 deg moved their tracks at full weight, in 3 since (tracker.ts CROWD_DEG).
    const loose = crossingSwapRate(headOn, 40, { rateWanderDegS: 20, rateMemoryS: 1 });
    console.log(`head-on crossing with rateWander 20, rateMemory 1: ${loose.swaps} swaps, ${loose.lost} lost ids in ${loose.runs} runs`);
    expect(loose.swaps / loose.runs).toBeGreaterThan(0.2);
  });
});

describe('a crossing where the quieter caller is read drawn towards the louder (issue 13, item 4)', () => {
  // A louder caller sweeps 80 -> 200 deg at 12 deg/s (0.3 s calls every 0.6 s); a quieter one
  // 150 -> 120 deg at -3 deg/s (0.1 s calls every 0.45 s); they cross at t = 4.7 s. While both call
  // within 40 deg, the quieter one is read 35 % of the way towards the louder, as the analysis
  // read a low caller under another on a 10 cm triangle (motion matrix draw 9999, crs05: 8-12
  // deg towards a caller 29 deg away). After the crossing that pull runs against the quieter
  // caller's motion; moved by it at full weight, its track turned round and lost the caller.
  const sources: TruthSource[] = [
    { azimuthAt: (t) => 80 + 12 * t, calls: bursts(0.2, 0.3, 0.3, 10), levelDbfs: -26 },
    { azimuthAt: (t) => 150 - 3 * t, calls: bursts(0.1, 0.1, 0.35, 10), levelDbfs: -28 },
  ];

  it('the quieter caller keeps its id through and after the crossing in at least 15 of 20 noisy runs (12 of 20 lost it when such readings moved its track at full weight)', () => {
    let lost = 0;
    for (let seed = 1; seed <= 20; seed++) {
      const synth = generateHops(sources, { durationS: 10, hopS: 0.01, seed, noiseDeg: 1.5, clutter: 0.05, dropout: 0.1, pull: { deg: 40, share: 0.35 } });
      const quiet = idsOfSource(synth, run(synth), 1);
      const id = majority(quiet.filter((x) => x.t < 3).map((x) => x.id));
      const after = quiet.filter((x) => x.t > 7 && x.id !== null);
      expect(id).not.toBeNull();
      expect(after.length).toBeGreaterThan(30);
      if (after.filter((x) => x.id === id).length / after.length < 0.9) lost++;
    }
    console.log(`quieter caller lost its id after the crossing in ${lost} of 20 runs`);
    expect(lost).toBeLessThanOrEqual(5);
  });
});

describe('a two-mic pair (front-back mirror) near +-90', () => {
  // True azimuths: A flies from 50 deg past the right endfire (90) to 130 deg behind, which the
  // pair sees as 50 -> 90 -> 50; B sits at -85 deg near the left endfire.
  const sources: TruthSource[] = [
    { azimuthAt: (t) => 50 + 20 * t, calls: bursts(0.1, 0.3, 0.1, 4), levelDbfs: -30 },
    { azimuthAt: () => -85, calls: bursts(0.3, 0.3, 0.1, 4), levelDbfs: -33 },
  ];
  const opts = { mirror: PAIR_X_MIRROR, rateWanderDegS: 15 };
  for (const seed of [1, 2, 3, 4, 5]) {
    it(`keeps one id for the source reflected at +90 and another for the source at -85 (seed ${seed})`, () => {
      const synth = generateHops(sources, { durationS: 4, hopS: 0.01, seed, noiseDeg: 1.5, clutter: 0.1, dropout: 0.1, mirrored: true });
      const r = run(synth, opts);
      const a = new Set(idsOfSource(synth, r, 0).filter((x) => x.t > 0.5).map((x) => x.id).filter((x) => x !== null));
      const b = new Set(idsOfSource(synth, r, 1).filter((x) => x.t > 0.5).map((x) => x.id).filter((x) => x !== null));
      expect(a.size).toBe(1);
      expect(b.size).toBe(1);
      expect([...a][0]).not.toBe([...b][0]);
      for (const e of r.events) {
        expect(e.mirror).toBe('front-back');
        expect(e.azimuth_deg).toBeGreaterThanOrEqual(-90);
        expect(e.azimuth_deg).toBeLessThanOrEqual(90);
      }
      // Bearings as the pair sees them.
      for (const m of matchCalls(sources, r.events)) {
        expect(m.event).not.toBeNull();
        const truth = fold(sources[m.source]!.azimuthAt((m.call[0] + m.call[1]) / 2));
        // Near endfire a reflected call averages points on both sides of its fold: allow more.
        expect(Math.abs(m.event!.azimuth_deg - truth)).toBeLessThan(Math.abs(truth) > 80 ? 4 : 2);
      }
    });
  }

  it('never joins +89 and -89 through 180 (they are 178 deg apart on a pair)', () => {
    const near: TruthSource[] = [
      { azimuthAt: () => 89, calls: bursts(0.1, 0.3, 0.3, 6), levelDbfs: -30 },
      { azimuthAt: () => -89, calls: bursts(0.4, 0.3, 0.3, 6), levelDbfs: -30 },
    ];
    const synth = generateHops(near, { durationS: 6, hopS: 0.01, seed: 9, noiseDeg: 1.5, clutter: 0, dropout: 0.05, mirrored: true });
    const r = run(synth, { mirror: PAIR_X_MIRROR });
    const ids = [0, 1].map((i) => new Set(r.events.filter((e) => (e.azimuth_deg > 0 ? 0 : 1) === i).map((e) => e.track)));
    expect(ids[0]!.size).toBe(1);
    expect(ids[1]!.size).toBe(1);
    expect([...ids[0]!][0]).not.toBe([...ids[1]!][0]);
    for (const e of r.events) expect(Math.abs(e.azimuth_deg)).toBeGreaterThan(85);
    expect(r.tracker.summary().every((s) => s.mirror === 'front-back')).toBe(true);
  });
});

describe('pairs along y and at 45 degrees: tracks and events on every side (ground truth: synth.ts)', () => {
  // Common practice, no source: a pair resolves only the angle to its axis, so a source reads as
  // its mirror image across the axis when it lies on the side not reported. The synth folds
  // independently of the project (foldAbout); the convention (README) puts a y pair's reports on
  // the right ([0, 180]) and a pair at 45 deg on the side with the larger front component.
  const cases: { name: string; geometry: ArrayGeometry; side: number; axis: number; kind: string; azimuths: number[] }[] = [
    { name: 'y pair', geometry: pairAlong('pair-y', [0, 0.2, 0]), side: 90, axis: 0, kind: 'left-right', azimuths: [150, -120, 30, -60] },
    { name: 'pair at 45 deg', geometry: pairAlong('pair-45', [0.1414, 0.1414, 0]), side: -45, axis: 45, kind: 'front-back', azimuths: [170, 30, 100, -130] },
  ];
  for (const c of cases) {
    it(`${c.name}: one track per source, events at the folded truth, mirror ${c.kind} on events and summaries`, () => {
      const mirror = mirrorOf(c.geometry);
      expect(mirror.sideDeg).toBeCloseTo(c.side, 6);
      expect(mirror.axisDeg).toBeCloseTo(c.axis, 6);
      expect(mirror.kind).toBe(c.kind);
      // Four sources, two of them folding onto the same half: their folded azimuths stay apart.
      const sources: TruthSource[] = c.azimuths.map((az, i) => ({ azimuthAt: () => az, calls: bursts(0.1 + 0.25 * i, 0.2, 0.8, 20), levelDbfs: -30 - i }));
      const folded = c.azimuths.map((az) => foldAbout(az, c.side));
      const synth = generateHops(sources, { durationS: 20, hopS: 0.01, seed: 4, noiseDeg: 1.5, clutter: 0.1, dropout: 0.1, mirrorSideDeg: c.side });
      const r = run(synth, { mirror });
      const matches = matchCalls(sources, r.events);
      const idOf = sources.map((_, i) => majority(matches.filter((m) => m.source === i).map((m) => m.event?.track ?? null)));
      expect(new Set(idOf).size).toBe(sources.length);
      expect(idOf.every((id) => id !== null)).toBe(true);
      let near = 0;
      for (const m of matches) {
        if (m.event === null) continue;
        expect(m.event.mirror).toBe(c.kind);
        expect(m.event.mirror_axis_deg).toBeCloseTo(c.axis, 2);
        if (m.event.track === idOf[m.source] && Math.abs(angleDiffDeg(m.event.azimuth_deg, folded[m.source]!)) <= 2) near++;
      }
      expect(near / matches.length).toBeGreaterThanOrEqual(0.95);
      for (const e of r.events) expect(Math.abs(angleDiffDeg(e.azimuth_deg, c.side))).toBeLessThanOrEqual(90.001);
      for (const t of r.tracker.summary()) {
        expect(t.mirror).toBe(c.kind);
        expect(t.mirrorAxisDeg).toBeCloseTo(c.axis, 6);
      }
    });
  }

  it('y pair: a source moving from behind-right across the axis to behind-left keeps one id (it reads as a reflection)', () => {
    // 120 -> 240 (= -120) deg: the pair along y reports 120 -> 180 -> 120.
    const sources: TruthSource[] = [{ azimuthAt: (t) => 120 + 30 * t, calls: [[0.1, 3.9]], levelDbfs: -30 }];
    const synth = generateHops(sources, { durationS: 4, hopS: 0.01, seed: 2, noiseDeg: 1, clutter: 0.05, dropout: 0.05, mirrorSideDeg: 90 });
    const r = run(synth, { mirror: mirrorOf(pairAlong('pair-y', [0, 0.2, 0])), rateWanderDegS: 15 });
    const ids = new Set(idsOfSource(synth, r, 0).filter((x) => x.t > 0.3).map((x) => x.id).filter((x) => x !== null));
    expect(ids.size).toBe(1);
  });
});

describe('3-D array: candidates with elevations', () => {
  it('tracks azimuth and elevation; events carry elevation_deg', () => {
    const sources: TruthSource[] = [
      { azimuthAt: () => 120, elevationAt: () => 35, calls: bursts(0.1, 0.3, 0.4, 10), levelDbfs: -30 },
      { azimuthAt: () => 120, elevationAt: () => -20, calls: bursts(0.45, 0.3, 0.4, 10), levelDbfs: -30 },
    ];
    const synth = generateHops(sources, { durationS: 10, hopS: 0.01, seed: 5, noiseDeg: 2, clutter: 0.2, dropout: 0.1 });
    const r = run(synth);
    const matches = matchCalls(sources, r.events);
    const idOf = [0, 1].map((i) => majority(matches.filter((m) => m.source === i).map((m) => m.event?.track ?? null)));
    expect(idOf[0]).not.toBe(idOf[1]);
    for (const m of matches) {
      expect(m.event?.track).toBe(idOf[m.source]);
      expect(Math.abs(angleDiffDeg(m.event!.azimuth_deg, 120))).toBeLessThan(2);
      expect(Math.abs(m.event!.elevation_deg! - sources[m.source]!.elevationAt!(0))).toBeLessThan(2);
    }
  });
});

describe('births, coasting and deaths', () => {
  it('a caller that calls once every few seconds, with calls too short to settle a track, keeps one id', () => {
    // 0.12 s calls (12 hops) with 2.6 s of silence between: a new id per call when such a track died after 2 s.
    const calls: [number, number][] = [[0.1, 0.22], [2.8, 2.92], [5.5, 5.62], [8.2, 8.32]];
    const sources: TruthSource[] = [{ azimuthAt: () => 10, calls, levelDbfs: -30 }];
    const synth = generateHops(sources, { durationS: 9, hopS: 0.01, seed: 2, noiseDeg: 1, clutter: 0, dropout: 0 });
    const r = run(synth, { trackTimeoutS: 10 });
    expect(r.events.map((e) => e.track)).toEqual([1, 1, 1, 1]);
    const summary = r.tracker.summary();
    expect(summary.length).toBe(1);
    expect(summary[0]!.events).toBe(4);
    expect(summary[0]!.firstSeenS).toBeLessThan(0.2);
  });

  it('a dormant stray lends its id only to a caller at its own bearing, not to one 22 deg away', () => {
    const stray: TruthSource = { azimuthAt: () => 30, calls: [[0.1, 0.22]], levelDbfs: -30 };
    const other: TruthSource = { azimuthAt: () => 52, calls: [[4, 4.3], [5, 5.3], [6, 6.3]], levelDbfs: -30 };
    for (const seed of [1, 2, 3]) {
      const r = run(generateHops([stray, other], { durationS: 7, hopS: 0.01, seed, noiseDeg: 1, clutter: 0, dropout: 0 }));
      expect(r.events.map((e) => e.track)).toEqual([1, 2, 2, 2]);
    }
  });

  it('a short-lived track of a stray direction does not take a caller that passes its bearing seconds later', () => {
    // A stray 0.3 s burst at 30 deg; from 4 s a caller calls every 0.6 s while it sweeps from
    // -20 deg ever faster (4 deg/s, gaining 8 deg/s each second), passing 30 deg near 7 s, so its
    // own track's prediction lags. The stray's track, coasting since 0.4 s with its gate grown
    // wide, took the caller's calls there on half of 20 seeds before it went dormant.
    const stray: TruthSource = { azimuthAt: () => 30, calls: [[0.1, 0.4]], levelDbfs: -30 };
    const moverCalls: [number, number][] = Array.from({ length: 14 }, (_, i) => [4 + 0.6 * i, 4.15 + 0.6 * i]);
    const mover: TruthSource = { azimuthAt: (t) => -20 + 4 * (t - 4) + 4 * (t - 4) ** 2, calls: moverCalls, levelDbfs: -30 };
    for (let seed = 1; seed <= 8; seed++) {
      const synth = generateHops([stray, mover], { durationS: 12.5, hopS: 0.01, seed, noiseDeg: 1, clutter: 0, dropout: 0 });
      const r = run(synth, { trackTimeoutS: 10 });
      const moverEvents = r.events.filter((e) => e.start_s > 3.9);
      expect(moverEvents.length).toBe(14);
      expect(new Set(moverEvents.map((e) => e.track))).toEqual(new Set([2]));
      expect(r.events.filter((e) => e.start_s < 1).map((e) => e.track)).toEqual([1]);
    }
  });

  it('dormant tracks make room when every slot is taken: a caller after more strays than --max-tracks still gets a track', () => {
    // Ten stray 0.12 s bursts at ten bearings within 3 s, then a caller from 6 s; --max-tracks 8.
    const strays: TruthSource[] = Array.from({ length: 10 }, (_, i) => ({ azimuthAt: () => -170 + 30 * i, calls: [[0.1 + 0.3 * i, 0.22 + 0.3 * i]] as [number, number][], levelDbfs: -30 }));
    const caller: TruthSource = { azimuthAt: () => 135, calls: [[6, 6.3], [7, 7.3], [8, 8.3]], levelDbfs: -30 };
    const synth = generateHops([...strays, caller], { durationS: 9, hopS: 0.01, seed: 7, noiseDeg: 1, clutter: 0, dropout: 0 });
    const r = run(synth, { maxTracks: 8 });
    expect(r.events.filter((e) => e.start_s < 3.5).length).toBe(10);
    const late = r.events.filter((e) => e.start_s > 5.5);
    expect(late.map((e) => Math.round(e.azimuth_deg))).toEqual([135, 135, 135]);
    expect(new Set(late.map((e) => e.track)).size).toBe(1);
  });

  it('coasts through a silence shorter than the timeout and retires after a longer one', () => {
    const calls: [number, number][] = [[0.1, 0.4], [3.1, 3.4], [20.1, 20.4]];
    const sources: TruthSource[] = [{ azimuthAt: () => 10, calls, levelDbfs: -30 }];
    const synth = generateHops(sources, { durationS: 21, hopS: 0.01, seed: 2, noiseDeg: 1, clutter: 0, dropout: 0 });
    // (The caller holds one bearing for 3 s: a settled track, which --static-timeout keeps; here as long as --track-timeout.)
    const r = run(synth, { trackTimeoutS: 10, staticTimeoutS: 10 });
    expect(r.events.map((e) => e.track)).toEqual([1, 1, 2]);
    const summary = r.tracker.summary();
    expect(summary.map((s) => s.track)).toEqual([1, 2]);
    expect(summary[0]!.lastSeenS).toBeLessThan(3.5);
    expect(summary[0]!.events).toBe(2);
  });

  it('a caller that held one bearing (a chorus) keeps its id through pauses up to --static-timeout, not only --track-timeout', () => {
    // Bouts at 10 deg: 0.1 to 3.4 s (settled: followed 3 s), then after 40 s and after 200 s more.
    const calls: [number, number][] = [[0.1, 0.4], [1.1, 1.4], [2.1, 2.4], [3.1, 3.4], [43.1, 43.4], [44.1, 44.4], [244.1, 244.4]];
    const synth = generateHops([{ azimuthAt: () => 10, calls, levelDbfs: -30 }], { durationS: 245, hopS: 0.01, seed: 3, noiseDeg: 1, clutter: 0, dropout: 0 });
    expect(run(synth, { trackTimeoutS: 10, staticTimeoutS: 300 }).events.map((e) => e.track)).toEqual([1, 1, 1, 1, 1, 1, 1]);
    expect(run(synth, { trackTimeoutS: 10, staticTimeoutS: 100 }).events.map((e) => e.track)).toEqual([1, 1, 1, 1, 1, 1, 2]);
    // A caller that moves is no chorus: it keeps --track-timeout.
    const mover: TruthSource = { azimuthAt: (t) => -60 + 4 * t, calls: calls.slice(0, 6), levelDbfs: -30 };
    const moving = run(generateHops([mover], { durationS: 45, hopS: 0.01, seed: 3, noiseDeg: 1, clutter: 0, dropout: 0 }), { trackTimeoutS: 10, staticTimeoutS: 300 });
    expect(moving.events.map((e) => e.track)).toEqual([1, 1, 1, 1, 2, 2]);
  });

  it('a new caller 12 deg from a chorus that has gone quiet gets a track of its own, every call an event', () => {
    // The chorus at 10 deg calls 0.1 to 3.4 s and stops; from 60 s a caller at 22 deg (the
    // chorus' track, kept by --static-timeout, gates it but does not take it: beyond its reach).
    const chorus: TruthSource = { azimuthAt: () => 10, calls: [[0.1, 0.4], [1.1, 1.4], [2.1, 2.4], [3.1, 3.4]], levelDbfs: -30 };
    const newcomer: TruthSource = { azimuthAt: () => 22, calls: [[60.1, 60.4], [61.1, 61.4], [62.1, 62.4], [63.1, 63.4]], levelDbfs: -30 };
    const r = run(generateHops([chorus, newcomer], { durationS: 64, hopS: 0.01, seed: 5, noiseDeg: 1, clutter: 0, dropout: 0 }), { trackTimeoutS: 10, staticTimeoutS: 300 });
    const late = r.events.filter((e) => e.start_s > 59);
    expect(late.map((e) => Math.round(e.azimuth_deg))).toEqual([22, 22, 22, 22]);
    expect(new Set(late.map((e) => e.track))).toEqual(new Set([2]));
    expect(r.events.filter((e) => e.start_s < 4).map((e) => e.track)).toEqual([1, 1, 1, 1]);
  });

  it('does not confirm clutter alone (M of N), and a call shorter than minEventS is no event', () => {
    const quiet = generateHops([], { durationS: 30, hopS: 0.01, seed: 4, noiseDeg: 1, clutter: 0.5, dropout: 0 });
    const r = run(quiet);
    expect(r.tracker.summary()).toEqual([]);
    expect(r.events).toEqual([]);
    const blip = generateHops([{ azimuthAt: () => 0, calls: [[1, 1.03]], levelDbfs: -30 }], {
      durationS: 2, hopS: 0.01, seed: 4, noiseDeg: 1, clutter: 0, dropout: 0,
    });
    expect(run(blip, { minEventS: 0.05 }).events).toEqual([]);
    expect(run(blip, { minEventS: 0.02 }).events.length).toBe(1);
  });

  it('bridges gaps up to maxGapS and splits on a longer one', () => {
    const calls: [number, number][] = [[1, 1.3], [1.38, 1.7]];
    const synth = generateHops([{ azimuthAt: () => -60, calls, levelDbfs: -30 }], {
      durationS: 2.5, hopS: 0.01, seed: 6, noiseDeg: 1, clutter: 0, dropout: 0,
    });
    // The pause is 80 ms; an onset at the second call splits the event after any pause.
    expect(run(synth, { maxGapS: 0.12, onsetThreshold: 1 }).events.length).toBe(1);
    expect(run(synth, { maxGapS: 0.12 }).events.length).toBe(2);
    expect(run(synth, { maxGapS: 0.05, onsetThreshold: 1 }).events.length).toBe(2);
  });

  it('emits an event about maxGapS after the call ends (documented latency)', () => {
    const synth = generateHops([{ azimuthAt: () => 30, calls: [[1, 1.5]], levelDbfs: -30 }], {
      durationS: 3, hopS: 0.01, seed: 8, noiseDeg: 1, clutter: 0, dropout: 0,
    });
    const tracker = new Tracker({ maxGapS: 0.2 });
    let emittedAt = NaN;
    for (const hop of synth.hops) if (tracker.update(hop).events.length > 0) emittedAt = hop.timeS;
    expect(emittedAt - 1.5).toBeGreaterThanOrEqual(0.2);
    expect(emittedAt - 1.5).toBeLessThanOrEqual(0.2 + 0.01 + 1e-9);
  });

  it('rejects hops out of time order and updates after finish', () => {
    const tracker = new Tracker();
    const hop = { timeS: 1, levelDbfs: -30, snrDb: 40, onset: 0, confidence: 1, candidates: [] };
    tracker.update(hop);
    expect(() => tracker.update(hop)).toThrow(/increasing time order/);
    tracker.finish();
    expect(() => tracker.update({ ...hop, timeS: 2 })).toThrow(/after finish/);
  });
});

describe('frog chorus profile: three static callers, overlapping bouts, long silences', () => {
  it('keeps each frog on its own id across 4-minute silences', () => {
    const frogs = trackerProfile('frog-chorus');
    // Three bouts (at 0, 250 and 500 s) of 20 s; within a bout each frog repeats a 0.4 s call
    // with its own period, so calls overlap.
    const bout = (phase: number, period: number): [number, number][] =>
      [0, 250, 500].flatMap((b) => bursts(b + phase, 0.4, period - 0.4, b + 20));
    const sources: TruthSource[] = [
      { azimuthAt: () => -100, calls: bout(0.1, 1.1), levelDbfs: -28 },
      { azimuthAt: () => 20, calls: bout(0.3, 1.3), levelDbfs: -32 },
      { azimuthAt: () => 150, calls: bout(0.6, 1.7), levelDbfs: -36 },
    ];
    const synth = generateHops(sources, { durationS: 521, hopS: 0.01, seed: 12, noiseDeg: 2, clutter: 0.2, dropout: 0.1 });
    const r = run(synth, frogs);
    const summary = r.tracker.summary();
    const trackOf: (number | null)[] = [];
    for (const [i, truth] of [[0, -100], [1, 20], [2, 150]] as const) {
      const ids = new Set(idsOfSource(synth, r, i).map((x) => x.id).filter((x) => x !== null));
      expect(ids.size).toBe(1);
      trackOf.push([...ids][0]!);
      const s = summary.find((x) => x.track === [...ids][0])!;
      expect(Math.abs(angleDiffDeg(s.azimuthDeg, truth))).toBeLessThan(1);
      expect(s.firstSeenS).toBeLessThan(1);
      expect(s.lastSeenS).toBeGreaterThan(515);
    }
    // Calls of different frogs overlap in time, so each call is matched among its frog's events.
    const matches = matchCalls(sources, r.events, trackOf);
    const right = matches.filter(
      (m) =>
        m.event !== null &&
        Math.abs(angleDiffDeg(m.event.azimuth_deg, sources[m.source]!.azimuthAt(0))) <= 2 &&
        Math.abs(m.event.start_s - m.call[0]) <= 0.02 &&
        Math.abs(m.event.end_s - m.call[1]) <= 0.02,
    ).length;
    console.log(`frog chorus: ${right} of ${matches.length} calls with an event within 2 deg and 20 ms; ${r.events.length} events`);
    expect(right / matches.length).toBeGreaterThanOrEqual(0.95);
    expect(r.events.length).toBeLessThanOrEqual(matches.length * 1.05);
  });
});

describe('choruses in bouts and a caller that passes them (issue 13, items 2 and 3)', () => {
  // A chorus at 75 degrees calls in bouts (6 calls, then a 5 s pause); a bird flies past from
  // -60 degrees and slows down until it sits on the chorus' bearing (as a bird flying away
  // along that line does), calling every 0.7 s from 14 to 26 s. The truth is the schedule.
  const chorusCalls: [number, number][] = [];
  for (let bout = 0; bout * 9.5 < 44; bout++) for (let k = 0; k < 6; k++) chorusCalls.push([bout * 9.5 + 1 + 0.75 * k, bout * 9.5 + 1.3 + 0.75 * k]);
  const birdAt = (t: number): number => {
    const u = Math.min(1, Math.max(0, (t - 14) / 12));
    return 74 - 134 * (1 - u) * (1 - u);
  };
  const sources: TruthSource[] = [
    { azimuthAt: () => 75, calls: chorusCalls, levelDbfs: -30 },
    { azimuthAt: birdAt, calls: bursts(14, 0.18, 0.52, 26), levelDbfs: -28 },
  ];
  const synth = generateHops(sources, { durationS: 44, hopS: 0.01, seed: 13, noiseDeg: 1.5, clutter: 0.1, dropout: 0.1 });
  const r = run(synth);
  const chorus = idsOfSource(synth, r, 0).filter((x) => x.id !== null);
  const bird = idsOfSource(synth, r, 1).filter((x) => x.id !== null);
  const chorusId = majority(chorus.map((x) => x.id));
  const birdId = majority(bird.filter((x) => x.t < 22).map((x) => x.id));

  it('the chorus keeps one id across its 5 s pauses, and no other track is born on it', () => {
    const share = chorus.filter((x) => x.id === chorusId).length / chorus.length;
    console.log(`chorus: ${chorus.length} assigned hops, ${(100 * share).toFixed(1)} % on track ${chorusId}; ids ${[...new Set(chorus.map((x) => x.id))].join(', ')}`);
    expect(chorus.length).toBeGreaterThan(700);
    expect(share).toBeGreaterThanOrEqual(0.99);
    const onChorus = r.events.filter((e) => Math.abs(angleDiffDeg(e.azimuth_deg, 75)) < 5 && e.start_s > 26.5);
    expect(onChorus.length).toBeGreaterThan(10);
    expect(new Set(onChorus.map((e) => e.track))).toEqual(new Set([chorusId]));
  });

  it("the bird has its own track, and that track takes no call of the chorus after the bird stops at the chorus' bearing", () => {
    expect(birdId).not.toBeNull();
    expect(birdId).not.toBe(chorusId);
    const birdCalls = bird.filter((x) => x.t < 22);
    expect(birdCalls.filter((x) => x.id === birdId).length / birdCalls.length).toBeGreaterThanOrEqual(0.95);
    const stolen = chorus.filter((x) => x.id === birdId);
    console.log(`bird track ${birdId}: ${stolen.length} chorus hops taken (of ${chorus.length})`);
    expect(stolen.filter((x) => x.t > 26.5)).toEqual([]);
  });
});

describe('where a moving call starts and ends (issue 13, item 5)', () => {
  it('events carry start_azimuth_deg, end_azimuth_deg and rate_deg_s of a line fitted to their hops: a caller sweeping 15 deg/s across the seam, and a fixed one', () => {
    const sources: TruthSource[] = [
      { azimuthAt: (t) => 150 + 15 * t, calls: bursts(0.3, 0.5, 0.3, 8), levelDbfs: -30 },
      { azimuthAt: () => -40, calls: bursts(0.7, 0.5, 0.3, 8), levelDbfs: -30 },
    ];
    const synth = generateHops(sources, { durationS: 8, hopS: 0.01, seed: 21, noiseDeg: 1, clutter: 0, dropout: 0.05 });
    const r = run(synth);
    const matches = matchCalls(sources, r.events).filter((m) => m.event !== null);
    expect(matches.length).toBeGreaterThan(14);
    for (const { source, event } of matches) {
      const e = event!;
      const truthAt = sources[source]!.azimuthAt;
      const rate = source === 0 ? 15 : 0;
      // A line over ~50 hops with 1 degree of noise: the slope to a few deg/s, the ends to ~1 degree.
      expect(Math.abs(e.rate_deg_s! - rate)).toBeLessThan(4);
      expect(Math.abs(angleDiffDeg(e.start_azimuth_deg!, truthAt(e.start_s)))).toBeLessThan(1.5);
      expect(Math.abs(angleDiffDeg(e.end_azimuth_deg!, truthAt(e.end_s)))).toBeLessThan(1.5);
      // The line runs through the event's mean.
      const mid = e.start_azimuth_deg! + angleDiffDeg(e.end_azimuth_deg!, e.start_azimuth_deg!) / 2;
      expect(Math.abs(angleDiffDeg(mid, e.azimuth_deg))).toBeLessThan(0.5);
    }
    const movers = matches.filter((m) => m.source === 0).map((m) => m.event!.rate_deg_s!);
    const mean = movers.reduce((a, b) => a + b, 0) / movers.length;
    console.log(`sweeping caller: ${movers.length} events, mean rate ${mean.toFixed(2)} deg/s (true 15)`);
    expect(Math.abs(mean - 15)).toBeLessThan(1);
  });
});

describe('where a moving call starts and ends on a pair (folded azimuths)', () => {
  it('a caller moving 60 -> 84 degrees in front of a pair along x: start, end and rate as reported azimuths', () => {
    const sources: TruthSource[] = [{ azimuthAt: (t) => 60 + 8 * t, calls: bursts(0.2, 0.5, 0.3, 3), levelDbfs: -30 }];
    const synth = generateHops(sources, { durationS: 3, hopS: 0.01, seed: 4, noiseDeg: 0.5, clutter: 0, dropout: 0, mirrored: true });
    const r = run(synth, { mirror: PAIR_X_MIRROR });
    const matches = matchCalls(sources, r.events).filter((m) => m.event !== null);
    expect(matches.length).toBeGreaterThanOrEqual(3);
    for (const { event } of matches) {
      const e = event!;
      expect(Math.abs(e.rate_deg_s! - 8)).toBeLessThan(2);
      expect(Math.abs(e.start_azimuth_deg! - (60 + 8 * e.start_s))).toBeLessThan(1);
      expect(Math.abs(e.end_azimuth_deg! - (60 + 8 * e.end_s))).toBeLessThan(1);
    }
  });
});

describe('a passer beside a chorus that has gone quiet (issue 13, items 3 and 4)', () => {
  // A chorus at 0 degrees calls for 3.4 s and falls quiet; a bird crosses its bearing from 40 to
  // -40 degrees at 16 deg/s (0.12 s calls every 0.6 s), reaching 0 degrees 2.5 s after the
  // chorus' last call. The quiet chorus' track must not take the bird's calls near its bearing: its
  // caller sits still, and the bird's own track predicts those calls well.
  const sources: TruthSource[] = [
    { azimuthAt: () => 0, calls: bursts(0.3, 0.3, 0.4, 3.4), levelDbfs: -30 },
    { azimuthAt: (t) => 40 - 16 * (t - 3), calls: bursts(3.1, 0.12, 0.48, 8), levelDbfs: -28 },
  ];
  const runs = [11, 12, 13, 14, 15, 16].map((seed) => {
    const synth = generateHops(sources, { durationS: 9, hopS: 0.01, seed, noiseDeg: 1.5, clutter: 0.05, dropout: 0.1 });
    return { synth, r: run(synth) };
  });

  it('the bird keeps its own track through the chorus bearing (>= 95 % of its hops there, at most 1 on the chorus track) in 6 noisy runs', () => {
    for (const { synth, r } of runs) {
      const chorus = idsOfSource(synth, r, 0).filter((x) => x.id !== null);
      const bird = idsOfSource(synth, r, 1).filter((x) => x.id !== null);
      const chorusId = majority(chorus.map((x) => x.id));
      const birdId = majority(bird.map((x) => x.id));
      expect(chorusId).not.toBeNull();
      expect(birdId).not.toBe(chorusId);
      // the bird's hops within 12 degrees of the chorus (t 4.75 - 6.25 s), less its call on the
      // chorus' very bearing (5.5 - 5.62 s: there the two are one direction, either track may take it)
      const near = bird.filter((x) => x.t > 4.75 && x.t < 6.25 && !(x.t > 5.45 && x.t < 5.7));
      console.log(`seed run: bird track ${birdId}, chorus track ${chorusId}; near hops ${near.length}, on chorus ${near.filter((x) => x.id === chorusId).length}, ids after 6 s ${[...new Set(bird.filter((x) => x.t > 6).map((x) => x.id))].join(',')}`);
      expect(near.length).toBeGreaterThan(15);
      expect(near.filter((x) => x.id === chorusId).length).toBeLessThanOrEqual(1);
      expect(near.filter((x) => x.id === birdId).length / near.length).toBeGreaterThanOrEqual(0.95);
      expect(bird.filter((x) => x.t > 5.7 && x.id !== birdId).length).toBeLessThanOrEqual(2);
    }
  });
});

describe('candidates at the zenith start no track', () => {
  // Sound reaching every mic at once (the coherent part of wind buffeting on a flat array)
  // reads as straight overhead, with an azimuth that means nothing: it must not become a caller.
  const overhead: TruthSource = { azimuthAt: (t) => 137 * t, elevationAt: () => 86, calls: [[0.2, 6]], levelDbfs: -30 };
  const high: TruthSource = { azimuthAt: () => 40, elevationAt: () => 65, calls: bursts(0.5, 0.3, 0.4, 6), levelDbfs: -30 };

  it('a steady stream of confident candidates at 86 deg elevation gives no track and no event; a caller at 65 deg does', () => {
    const synth = generateHops([overhead, high], { durationS: 6, hopS: 0.01, seed: 3, noiseDeg: 2, clutter: 0, dropout: 0.05 });
    const r = run(synth);
    const callerId = majority(idsOfSource(synth, r, 1).map((x) => x.id));
    expect(callerId).not.toBeNull();
    // they may feed the caller's live track (with their azimuth noise widened), never one of their own
    expect(idsOfSource(synth, r, 0).filter((x) => x.id !== null && x.id !== callerId)).toEqual([]);
    expect(r.events.length).toBeGreaterThan(5);
    for (const e of r.events) expect(Math.abs(angleDiffDeg(e.azimuth_deg, 40))).toBeLessThan(5);
  });
});

describe('a still caller whose readings sweep within each call coasts still through its pauses (issue 13, item 2)', () => {
  // A chorus at 137 degrees whose readings run from 134 to 140 degrees within each call (an
  // overlapping caller biases them): the filter learns a rate of about 20 deg/s from every call.
  // It calls in bouts of 6 calls with 6 s pauses. Coasting at that rate, its track had left its
  // bearing when it called again, and a second track was born there.
  const calls = [0, 9, 18].flatMap((start) => bursts(start + 0.5, 0.3, 0.4, start + 4.6));
  const offsets = [5, -1, 2, -5, -3, -1, -5, 0, 4];
  const callIndex = (t: number): number => Math.max(0, calls.findLastIndex(([a]) => a <= t));
  // each call sweeps 6 degrees up, the last of a bout (the sixth) 14
  const sweep = (k: number): number => (k % 6 === 5 ? 14 : 6);
  const chorus: TruthSource = { azimuthAt: (t) => 134 + offsets[callIndex(t) % offsets.length]! + (sweep(callIndex(t)) * (t - calls[callIndex(t)]![0])) / 0.3, calls, levelDbfs: -30 };

  it('one id for the chorus across its pauses, and its events stay within its readings (6 noisy runs)', () => {
    for (const seed of [61, 62, 63, 64, 65, 66]) {
      const synth = generateHops([chorus], { durationS: 24, hopS: 0.01, seed, noiseDeg: 1.5, clutter: 0.05, dropout: 0.1 });
      const r = run(synth);
      const ids = idsOfSource(synth, r, 0).filter((x) => x.id !== null);
      const id = majority(ids.map((x) => x.id));
      console.log(`seed ${seed}: tracks on the chorus ${[...new Set(ids.map((x) => x.id))].join(', ')}; events on ${[...new Set(r.events.map((e) => e.track))].join(', ')}`);
      expect(ids.filter((x) => x.id === id).length / ids.length).toBeGreaterThanOrEqual(0.99);
      expect(new Set(r.events.map((e) => e.track))).toEqual(new Set([id]));
      for (const e of r.events) expect(Math.abs(angleDiffDeg(e.azimuth_deg, 137))).toBeLessThan(9);
    }
  });
});

describe('a chorus track does not follow a caller that starts beside it (issue 13, item 3)', () => {
  // A chorus at 0 degrees calls for 4 s; then a bird starts calling 8 degrees from it and flies
  // off at 15 deg/s. Its first call may go to the chorus' track (they are within the gate), but
  // the chorus' track must stay home: the chorus sits still.
  const sources: TruthSource[] = [
    { azimuthAt: () => 0, calls: bursts(0.3, 0.3, 0.4, 4.4), levelDbfs: -30 },
    { azimuthAt: (t) => -8 - 15 * (t - 4.5), calls: bursts(4.5, 0.15, 0.35, 9), levelDbfs: -28 },
  ];
  const runs = [21, 22, 23, 24, 25, 26].map((seed) => {
    const synth = generateHops(sources, { durationS: 9.5, hopS: 0.01, seed, noiseDeg: 1.5, clutter: 0.05, dropout: 0.1 });
    return { synth, r: run(synth) };
  });

  it('at most 2 of the bird hops more than 15 deg from the chorus land on the chorus track (old tracker: all of them), in 6 noisy runs', () => {
    for (const { synth, r } of runs) {
      const chorusId = majority(idsOfSource(synth, r, 0).map((x) => x.id));
      expect(chorusId).not.toBeNull();
      const far = idsOfSource(synth, r, 1).filter((x) => x.t > 5 && Math.abs(sources[1]!.azimuthAt(x.t)) > 15);
      expect(far.length).toBeGreaterThan(50);
      const taken = far.filter((x) => x.id === chorusId).length;
      console.log(`chorus track ${chorusId}: ${taken} of the bird's ${far.length} far hops`);
      expect(taken).toBeLessThanOrEqual(2);
    }
  });
});

describe('a flat array: elevations are followed but do not split or steal (issue 13)', () => {
  // A flat (planar, horizontal) array measures elevation through the cosine of the delays'
  // angle, which changes slowly near the horizon: its elevation readings of one chorus scatter
  // by tens of degrees while its azimuth holds (common practice, no source). The square's mirror
  // is up-down, as the pipeline derives it.
  const square = loadGeometryFile(fileURLToPath(new URL('../../configs/arrays/square-10cm.json', import.meta.url)));
  const flat = mirrorOf(square);
  // One chorus at 30 deg whose elevation reads near 7 deg for its first 5 s (its track settles
  // there) and then near 30 deg in every other bout.
  const chorus: TruthSource = { azimuthAt: () => 30, elevationAt: (t) => (t > 5 && Math.floor(t / 0.7) % 2 === 0 ? 30 : 7), calls: bursts(0.2, 0.3, 0.4, 12), levelDbfs: -30 };

  it('the flat array has an up-down mirror', () => {
    expect(flat.kind).toBe('up-down');
  });

  it('one chorus read at 7 and at 30 deg of elevation keeps one track on the flat array (6 noisy runs)', () => {
    for (const seed of [31, 32, 33, 34, 35, 36]) {
      const synth = generateHops([chorus], { durationS: 12, hopS: 0.01, seed, noiseDeg: 2, clutter: 0.05, dropout: 0.1 });
      const r = run(synth, { mirror: flat });
      const ids = idsOfSource(synth, r, 0).filter((x) => x.t > 1);
      const id = majority(ids.map((x) => x.id));
      expect(id).not.toBeNull();
      expect(ids.filter((x) => x.id !== id).length / ids.length).toBeLessThan(0.05);
      expect(new Set(r.events.map((e) => e.track)).size).toBe(1);
    }
  });

  /** The chorus read at 7 deg of elevation throughout, with another source, on the flat array: the run and the chorus' majority track id (not null). */
  function lowChorusWith(other: TruthSource, seed: number) {
    const low: TruthSource = { ...chorus, elevationAt: () => 7 };
    const synth = generateHops([low, other], { durationS: 12, hopS: 0.01, seed, noiseDeg: 1, clutter: 0, dropout: 0.05 });
    const r = run(synth, { mirror: flat });
    const chorusId = majority(idsOfSource(synth, r, 0).map((x) => x.id));
    expect(chorusId).not.toBeNull();
    return { synth, r, chorusId };
  }

  it('wind read at 72-77 deg of elevation (below the zenith rule) in the chorus pauses does not feed the chorus track', () => {
    // Wind still reads high with an azimuth that means nothing; without FLAT_ELEVATION_GATE_DEG
    // it fed the chorus track and dragged it round the circle.
    const wind: TruthSource = { azimuthAt: (t) => 30 + 60 * Math.sin(5 * t), elevationAt: (t) => 74.5 + 2.5 * Math.sin(11 * t), calls: bursts(0.55, 0.3, 0.4, 12), levelDbfs: -30 };
    for (const seed of [51, 52, 53]) {
      const { synth, r, chorusId } = lowChorusWith(wind, seed);
      const windOnChorus = idsOfSource(synth, r, 1).filter((x) => x.id === chorusId).length;
      console.log(`seed ${seed}: ${windOnChorus} wind hops on the chorus track`);
      expect(windOnChorus).toBe(0);
      const chorusEvents = r.events.filter((e) => e.track === chorusId);
      expect(chorusEvents.length).toBeGreaterThan(10);
      for (const e of chorusEvents) expect(Math.abs(angleDiffDeg(e.azimuth_deg, 30))).toBeLessThan(4);
    }
  });

  it('the chorus read 72 deg up as the second source of hops where a louder caller calls keeps its own track', () => {
    // Beside a louder caller a second caller is read from the few bins it holds, and a flat
    // array's elevation of it errs widely: a chorus settled 10-20 deg up read at 73-75 deg up for
    // a few hops under the other chorus (motion matrix draw 55, cho01). Kept out of its own track
    // by FLAT_ELEVATION_GATE_DEG, it fed another track high up (here: a stray track born 50 deg
    // away of readings 80 deg up just before) or none. Within the chorus' home in azimuth, a
    // further source is not kept out by its elevation; the hop's first candidate still is (the
    // wind test above).
    const other: TruthSource = { azimuthAt: () => -60, elevationAt: () => 5, calls: bursts(5.2, 0.3, 0.4, 12), levelDbfs: -20 };
    const inOther = (t: number) => other.calls.some(([a, b]) => t >= a && t < b);
    const chorusHigh: TruthSource = { ...chorus, elevationAt: (t) => (inOther(t) ? 72 : 7) };
    const stray: TruthSource = { azimuthAt: (t) => -20 + 20 * (t - 4.9), elevationAt: () => 80, calls: [[4.9, 5.15]], levelDbfs: -40 };
    let withChorus = 0;
    let all = 0;
    for (const seed of [71, 72, 73, 74]) {
      const synth = generateHops([chorusHigh, other, stray], { durationS: 12, hopS: 0.01, seed, noiseDeg: 1, clutter: 0, dropout: 0.05 });
      const r = run(synth, { mirror: flat });
      const early = idsOfSource(synth, r, 0).filter((x) => x.t < 5);
      const chorusId = majority(early.map((x) => x.id));
      expect(chorusId).not.toBeNull();
      // The chorus' hops heard beside the louder caller (read high up), after the chorus settled.
      const beside = idsOfSource(synth, r, 0).filter((x) => inOther(x.t) && x.t > 5.3);
      const kept = beside.filter((x) => x.id === chorusId).length;
      console.log(`seed ${seed}: ${kept} of ${beside.length} high readings beside the louder caller on the chorus track`);
      withChorus += kept;
      all += beside.length;
    }
    // With the hop's further sources kept out like its first: 0 of them.
    expect(all).toBeGreaterThan(100);
    expect(withChorus / all).toBeGreaterThan(0.9);
  });

  it("a lobe read 4 deg beside the chorus' calls and 55 deg up starts no track of its own", () => {
    // A call above the array's aliasing limit also gives a lobe near its caller's azimuth, high
    // up: kept out of the chorus track by its elevation, it is still no newcomer.
    const lobe: TruthSource = { azimuthAt: () => 34, elevationAt: () => 55, calls: bursts(0.25, 0.2, 0.5, 12), levelDbfs: -40 };
    for (const seed of [54, 55, 56]) {
      const { synth, r, chorusId } = lowChorusWith(lobe, seed);
      const lobeIds = new Set(idsOfSource(synth, r, 1).map((x) => x.id).filter((id) => id !== null && id !== chorusId));
      expect([...lobeIds]).toEqual([]);
      expect(new Set(r.events.map((e) => e.track))).toEqual(new Set([chorusId]));
    }
  });

  it("wind's track high up does not keep a caller near the horizon in its azimuth gate from a track of its own", () => {
    // Wind read at 72-77 deg of elevation from the start, its azimuth wandering 30 +- 15 deg: its
    // track's azimuth gate is wide (a near-zenith track's azimuth noise is widened). A caller at 38
    // deg, 8 deg up, starts calling at 4 s. The wind track cannot take its candidates (they are
    // more than FLAT_ELEVATION_GATE_DEG below it); before this rule they also started no track
    // (they lay in its gate) and the caller had no event (motion matrix draw 555, cho02).
    const wind: TruthSource = { azimuthAt: (t) => 30 + 15 * Math.sin(3 * t), elevationAt: (t) => 74.5 + 2.5 * Math.sin(11 * t), calls: bursts(0, 0.3, 0.1, 12), levelDbfs: -30 };
    const caller: TruthSource = { azimuthAt: () => 38, elevationAt: () => 8, calls: bursts(4, 0.2, 0.5, 12), levelDbfs: -25 };
    for (const seed of [61, 62, 63]) {
      const synth = generateHops([wind, caller], { durationS: 12, hopS: 0.01, seed, noiseDeg: 1, clutter: 0, dropout: 0.05 });
      const r = run(synth, { mirror: flat });
      const callerId = majority(idsOfSource(synth, r, 1).map((x) => x.id));
      const callerEvents = r.events.filter((e) => e.track === callerId && e.start_s > 4 && Math.abs(angleDiffDeg(e.azimuth_deg, 38)) < 4);
      console.log(`seed ${seed}: caller on track ${callerId}, ${callerEvents.length} events there at its bearing (11 calls)`);
      expect(callerId).not.toBeNull();
      expect(callerEvents.length).toBeGreaterThanOrEqual(9);
    }
  });

  it('candidates near the zenith in the chorus pauses do not feed the chorus track: its events stay at its bearing', () => {
    // Sound reaching every mic at once reads as straight overhead with an azimuth that means nothing.
    const overhead: TruthSource = { azimuthAt: (t) => 30 + 40 * Math.sin(7 * t), elevationAt: () => 86, calls: bursts(0.55, 0.3, 0.4, 12), levelDbfs: -30 };
    const low: TruthSource = { ...chorus, elevationAt: () => 7 };
    for (const seed of [41, 42, 43]) {
      const synth = generateHops([low, overhead], { durationS: 12, hopS: 0.01, seed, noiseDeg: 2, clutter: 0, dropout: 0.05 });
      const r = run(synth, { mirror: flat });
      expect(idsOfSource(synth, r, 1).filter((x) => x.id !== null)).toEqual([]);
      const chorusEvents = r.events.filter((e) => e.track === majority(idsOfSource(synth, r, 0).map((x) => x.id)));
      expect(chorusEvents.length).toBeGreaterThan(10);
      for (const e of chorusEvents) expect(Math.abs(angleDiffDeg(e.azimuth_deg, 30))).toBeLessThan(4);
    }
  });

  it("on a flat array, a call whose onset read as a lobe high up is followed when it reads lower", () => {
    // A sweep above a 20 cm square's aliasing limit, 6 m off and 4 m up (motion matrix draw 555,
    // pas15): its onset read at 102 deg and 58 deg up (a lobe) for three hops, which started and
    // confirmed a track; the call itself then read at 97 deg and 17 deg up. More than
    // FLAT_ELEVATION_GATE_DEG below the track, it was kept out of it, and inside its azimuth gate
    // it started no track either: the call had no event. A lobe reads higher than its caller, so
    // a candidate that far below the track (not one near the zenith) may take it.
    const square = loadGeometryFile(fileURLToPath(new URL('../../configs/arrays/square-20cm.json', import.meta.url)));
    const tracker = new Tracker({ mirror: mirrorOf(square) });
    const onset = feed(tracker, 0.005, 0.03, () => [{ azimuthDeg: 102, elevationDeg: 58, score: 1 }]);
    const call = feed(tracker, 0.035, 0.15, (t) => [{ azimuthDeg: 97 + 20 * (t - 0.035), elevationDeg: 17, score: 1 }]);
    const events = [...onset.events, ...call.events, ...tracker.finish()];
    console.log(`lobe onset: ${events.map((e) => `track ${e.track} ${e.start_s.toFixed(2)}-${e.end_s.toFixed(2)} s at ${e.azimuth_deg.toFixed(1)}`).join('; ')}`);
    expect(call.ids.size).toBe(1);
    expect(events).toHaveLength(1);
    expect(events[0]!.end_s).toBeGreaterThan(0.15);
    expect(Math.abs(angleDiffDeg(events[0]!.end_azimuth_deg!, 100))).toBeLessThan(3);
  });
});

/**
 * Feeds `hops` hops of 10 ms (centres at 0.005 s + i * 10 ms) from `hopAt` (given the hop's time
 * and a seeded bearing noise in -1..1 deg) to a tracker; returns the track ids that the calling
 * hops (inCall, after the first 6) were given, and how many such hops there were.
 */
function callTracks(tracker: Tracker, hops: number, seed: number, hopAt: (t: number, noise: () => number) => { obs: Parameters<Tracker['update']>[0]; inCall: boolean }) {
  const ids = new Set<number>();
  let s = seed;
  const noise = () => ((s = (s * 16807) % 2147483647) / 2147483647 - 0.5) * 2;
  let callHops = 0;
  for (let i = 0; i < hops; i++) {
    const { obs, inCall } = hopAt(0.005 + i * 0.01, noise);
    const u = tracker.update(obs);
    if (inCall && i > 5) {
      callHops++;
      const id = u.trackIds[0];
      if (id !== null && id !== undefined) ids.add(id);
    }
  }
  return { ids: [...ids], callHops };
}

describe("a call's memory after it ends (hops whose own spectra do not support their direction)", () => {
  // A caller sweeping 60 deg/s, 0.15 s calls every 0.6 s; after each call the analysis keeps
  // reporting the call's last direction for 0.17 s (its memory) with confidence 0.8 but a fresh
  // coherence (freshZ) of 0.5, as measured after a broadband passer's calls in wind (motion matrix
  // draw 77, pas09: 18-35 during the call, 0-2.6 after it). Bearing noise up to 1 deg.
  function sweep(withFresh: boolean) {
    return callTracks(new Tracker({}), 440, 7, (t, noise) => {
      const phase = t % 0.6;
      const az = (x: number) => -100 + 60 * x;
      const inCall = phase < 0.15;
      const tail = !inCall && phase < 0.32;
      const candidates = inCall || tail ? [{ azimuthDeg: az(inCall ? t : t - phase + 0.15) + noise(), elevationDeg: null, score: 1 }] : [];
      return { inCall, obs: { timeS: t, levelDbfs: -30, snrDb: inCall ? 30 : 14, onset: 0, confidence: inCall ? 1 : tail ? 0.8 : 0, candidates, ...(withFresh ? { freshZ: inCall ? 20 : 0.5 } : {}) } };
    });
  }

  it('keeps the track alive without moving it: one track for all 8 calls', () => {
    const r = sweep(true);
    console.log(`held: call hops on tracks ${r.ids.join(', ')}`);
    expect(r.callHops).toBeGreaterThan(100);
    expect(r.ids).toHaveLength(1);
  });

  // Measured: 3 tracks for the 8 calls (more than 3 while the onward model allowed 6 times a young
  // mover's rate instead of 9: it hands fewer calls on).
  it('fed to the filter (no freshZ given), the held directions stop the track and the caller is split over new tracks', () => {
    const r = sweep(false);
    console.log(`fed: call hops on tracks ${r.ids.join(', ')}`);
    expect(r.ids.length).toBeGreaterThan(2);
  });
});

describe("an event's direction comes from the hops that move its track", () => {
  // A caller at 20 deg calls 0.15 s every 0.6 s (SNR 30 dB, confidence 1, fresh coherence 20);
  // after each call, for 0.1 s, the hops read 26 deg (the analysis' memory of the call bent towards
  // whatever sounds next, as a passer's call at -138 deg came out at -130 when a chorus at -80
  // started: motion matrix draw 6060, cho01) and keep the event open: either the memory alone
  // (fresh coherence 0.5, confidence 0.8) or a hop less sure than an event's start asks
  // (confidence 0.4, between the leave and enter levels 0.3 and 0.5). Bearing noise up to 0.5 deg.
  function calls(tail: 'memory' | 'weak'): EventRecord[] {
    const tracker = new Tracker({});
    let seed = 11;
    const noise = () => ((seed = (seed * 16807) % 2147483647) / 2147483647 - 0.5);
    const events: EventRecord[] = [];
    for (let i = 0; i < 360; i++) {
      const t = 0.005 + i * 0.01;
      const phase = t % 0.6;
      const inCall = phase < 0.15;
      const inTail = !inCall && phase < 0.25;
      const candidates = inCall || inTail ? [{ azimuthDeg: (inCall ? 20 : 26) + noise(), elevationDeg: null, score: 1 }] : [];
      const confidence = inCall ? 1 : inTail ? (tail === 'memory' ? 0.8 : 0.4) : 0;
      const freshZ = inCall ? 20 : inTail && tail === 'memory' ? 0.5 : 20;
      events.push(...tracker.update({ timeS: t, levelDbfs: -30, snrDb: inCall ? 30 : inTail ? 14 : 0, onset: 0, confidence, candidates, freshZ }).events);
    }
    events.push(...tracker.finish());
    return events;
  }

  // Measured: every event 19.89-20.07 deg for both tails; with the tail hops in the mean (the rule
  // switched off) 21.99-22.14 deg after the memory, 21.16-21.32 after the weak hops.
  for (const tail of ['memory', 'weak'] as const) {
    it(`a call followed by hops of ${tail === 'memory' ? "the analysis' memory" : 'low confidence'} reading 6 deg off: the events lie at the caller, their ends still cover the tail`, () => {
      const events = calls(tail);
      console.log(`tail of ${tail}: events at ${events.map((e) => `${e.azimuth_deg.toFixed(2)} (${e.start_s.toFixed(2)}-${e.end_s.toFixed(2)} s)`).join(', ')}`);
      expect(events.length).toBe(6);
      for (const e of events) {
        expect(Math.abs(e.azimuth_deg - 20)).toBeLessThan(0.5);
        expect(e.end_s - e.start_s).toBeGreaterThan(0.2);
      }
    });
  }
});

describe('weak hops between a passer\'s calls (under the event-enter confidence)', () => {
  // A passer sweeping +30 deg/s, 0.1 s calls every 0.55 s (SNR 30 dB, confidence 1); between its
  // calls, for 0.35 s, low and weakly coherent sound (fresh coherence 6: above the held-memory
  // limit) reads directions walking from the last call backwards at -40 deg/s, as measured between
  // a passer's calls in wind on a 10 cm tetrahedron (motion matrix draw 8080, cho01: SNR 5-11 dB,
  // confidence 0.25-0.65, freshZ 4-9.5) and on a 20 cm pair (draw 4242, pas13: SNR 9-15 dB,
  // confidence 0.19-0.31). Bearing noise up to 1 deg.
  function pass(options: ConstructorParameters<typeof Tracker>[0], weakSnrDb: number, weakConfidence: number) {
    return callTracks(new Tracker(options), 500, 11, (t, noise) => {
      const phase = t % 0.55;
      const callAz = -90 + 30 * t;
      const inCall = phase < 0.1;
      const weak = !inCall && phase < 0.45;
      const az = inCall ? callAz : -90 + 30 * (t - phase + 0.1) - 40 * (phase - 0.1);
      const candidates = inCall || weak ? [{ azimuthDeg: az + noise(), elevationDeg: null, score: 1 }] : [];
      return { inCall, obs: { timeS: t, levelDbfs: -30, snrDb: inCall ? 30 : weak ? weakSnrDb : 0, onset: 0, confidence: inCall ? 1 : weak ? weakConfidence : 0, candidates, freshZ: inCall ? 20 : 6 } };
    });
  }

  it('below the event-enter SNR too (8 dB, confidence 0.45): they support the track without moving it, one track for all 9 calls', () => {
    const r = pass({}, 8, 0.45);
    console.log(`weak hops held (8 dB): call hops on tracks ${r.ids.join(', ')}`);
    expect(r.callHops).toBeGreaterThan(80);
    expect(r.ids).toHaveLength(1);
  });

  it('over the event-enter SNR (a gust: 14 dB, confidence 0.25): still held, one track for all 9 calls', () => {
    const r = pass({}, 14, 0.25);
    console.log(`weak hops held (14 dB): call hops on tracks ${r.ids.join(', ')}`);
    expect(r.callHops).toBeGreaterThan(80);
    expect(r.ids).toHaveLength(1);
  });

  it('with the event-enter confidence at 0.2 (so they could start an event) they move it, and the passer gets more than one track', () => {
    const r = pass({ eventEnterConfidence: 0.2, eventLeaveConfidence: 0.2 }, 14, 0.25);
    console.log(`weak hops fed: call hops on tracks ${r.ids.join(', ')}`);
    expect(r.ids.length).toBeGreaterThan(1);
  });
});

describe('a passer heard under a louder chorus (candidates underLouder)', () => {
  // A chorus at -30 deg calls 0.3 s of every 0.7 s; a passer moves -100 -> -76 deg at 2 deg/s
  // and calls 0.12 s of every 0.65 s (19 calls). On hops where both call the chorus is the hop's answer and the
  // passer a further source heard in a few bins (score 0.6, the analysis' RUNS_SCORE); for 0.08 s
  // after such a call the bins read a blend walking from the passer towards the chorus at
  // 300 deg/s, as measured in the motion matrix (draw 6060, cho01: -134 -> -112 deg in 0.07 s
  // after a passer's call at -137 under a chorus at -80). Bearing noise up to 1 deg.
  function run(flagged: boolean) {
    const tracker = new Tracker({});
    let s = 5;
    const noise = () => ((s = (s * 16807) % 2147483647) / 2147483647 - 0.5) * 2;
    const passerTracks = new Set<number>();
    const chorusTracks = new Set<number>();
    let chorusOnPasser = 0;
    let passerCallsWithEvent = 0;
    const events: EventRecord[] = [];
    for (let i = 0; i < 1200; i++) {
      const t = 0.005 + i * 0.01;
      const chorus = t % 0.7 < 0.3;
      const phase = t % 0.65;
      const passer = phase < 0.12;
      const tail = !passer && phase < 0.22 && chorus;
      const passerAz = -100 + 2 * t;
      const candidates: { azimuthDeg: number; elevationDeg: null; score: number; underLouder?: boolean }[] = [];
      if (chorus) candidates.push({ azimuthDeg: -30 + noise(), elevationDeg: null, score: 1 });
      if (passer) candidates.push({ azimuthDeg: passerAz + noise(), elevationDeg: null, score: chorus ? 0.6 : 1, ...(chorus && flagged ? { underLouder: true } : {}) });
      if (tail) candidates.push({ azimuthDeg: -100 + 2 * (t - phase + 0.12) + 300 * (phase - 0.12) + noise(), elevationDeg: null, score: 0.6, ...(flagged ? { underLouder: true } : {}) });
      const sounding = chorus || passer;
      const u = tracker.update({ timeS: t, levelDbfs: -30, snrDb: sounding ? 30 : 0, onset: 0, confidence: sounding ? 1 : 0, candidates, freshZ: sounding ? 20 : 0 });
      events.push(...u.events);
      const cId = chorus ? u.trackIds[0] : null;
      const pId = passer ? u.trackIds[chorus ? 1 : 0] : null;
      if (i > 5 && cId !== null && cId !== undefined) chorusTracks.add(cId);
      if (i > 5 && pId !== null && pId !== undefined) passerTracks.add(pId);
    }
    events.push(...tracker.finish());
    const main = [...passerTracks][0];
    for (const e of events) {
      if (e.track === main && Math.abs(angleDiffDeg(e.azimuth_deg, -30)) < 10) chorusOnPasser++;
    }
    for (let k = 0; k * 0.65 < 12; k++) {
      const c0 = k * 0.65;
      if (events.some((e) => e.track === main && e.start_s < c0 + 0.12 && e.end_s > c0 && Math.abs(angleDiffDeg(e.azimuth_deg, -100 + 2 * c0)) < 10)) passerCallsWithEvent++;
    }
    return { passerTracks: [...passerTracks], chorusTracks: [...chorusTracks], chorusOnPasser, passerCallsWithEvent };
  }

  it('keep the passer on one track with an event for most of its calls, and the chorus off that track', () => {
    const r = run(true);
    console.log(`under the chorus, flagged: passer on tracks ${r.passerTracks.join(', ')}, chorus on ${r.chorusTracks.join(', ')}, chorus events on the passer track ${r.chorusOnPasser}, passer calls with an event ${r.passerCallsWithEvent} of 19`);
    expect(r.passerTracks).toHaveLength(1);
    expect(r.chorusTracks).toHaveLength(1);
    expect(r.chorusOnPasser).toBe(0);
    expect(r.passerCallsWithEvent).toBeGreaterThanOrEqual(17);
  });


  it('confirm no track: a tentative track born of one firm hop and fed only such candidates stays unconfirmed', () => {
    const tracker = new Tracker({});
    const firm = feed(tracker, 0.005, 0.01, () => [{ azimuthDeg: 50, elevationDeg: null, score: 1 }]);
    const heard = feed(tracker, 0.015, 1, () => [{ azimuthDeg: 50, elevationDeg: null, score: 0.6, underLouder: true }]);
    const events = [...firm.events, ...heard.events, ...tracker.finish()];
    expect(firm.ids.size + heard.ids.size).toBe(0);
    expect(events).toEqual([]);
  });

  it('on a flat array, one with an elevation far from the caller\'s neither starts the track\'s elevation nor shuts the caller out', () => {
    // A track known only by azimuth (the analysis gave no elevation); under a louder caller a
    // further source near it reads 60 deg up (a lobe); then the caller calls alone, 5 deg up.
    // Started from that reading, the track's elevation shut its own caller out (more than
    // FLAT_ELEVATION_GATE_DEG away) and each call began another track (motion matrix draw 77, cho04).
    const square = loadGeometryFile(fileURLToPath(new URL('../../configs/arrays/square-10cm.json', import.meta.url)));
    const tracker = new Tracker({ mirror: mirrorOf(square) });
    const calling = (t: number) => t % 0.7 < 0.3;
    const a = feed(tracker, 0.005, 3, (t) => (calling(t) ? [{ azimuthDeg: 30, elevationDeg: null, score: 1 }] : []));
    const b = feed(tracker, 3.005, 1, (t) => (calling(t) ? [{ azimuthDeg: 31, elevationDeg: 60, score: 0.6, underLouder: true }] : []));
    const c = feed(tracker, 4.005, 4, (t) => (calling(t) ? [{ azimuthDeg: 30, elevationDeg: 5, score: 1 }] : []));
    const events = [...a.events, ...b.events, ...c.events, ...tracker.finish()];
    const late = events.filter((e) => e.start_s > 4);
    console.log(`flat array: tracks ${[...new Set(events.map((e) => e.track))].join(', ')}, events after 4 s ${late.length}`);
    expect(new Set(events.map((e) => e.track)).size).toBe(1);
    expect(late.length).toBeGreaterThanOrEqual(5);
  });

  it('not flagged, the blends after its calls move the passer track (the check above can fail)', () => {
    const r = run(false);
    console.log(`under the chorus, not flagged: passer on tracks ${r.passerTracks.join(', ')}, chorus on ${r.chorusTracks.join(', ')}, chorus events on the passer track ${r.chorusOnPasser}, passer calls with an event ${r.passerCallsWithEvent} of 19`);
    expect(r.passerTracks.length > 1 || r.chorusTracks.length > 1 || r.chorusOnPasser > 0 || r.passerCallsWithEvent < 17).toBe(true);
  });
});

describe("a young mover's next call ahead of its prediction (the onward model, issue 13 item 1)", () => {
  // A first call of 0.2 s read as moving at 20 deg/s (the evidence memory trails a faster
  // caller), then 0.6 s quiet, then a call at a bearing ahead of the track, on the side it moves
  // towards, beyond its prediction's gate. Readings carry no noise: what the rule decides is
  // whether the later call takes the first one's id.
  function twoCalls(firstS: number, nextAz: number, options: TrackerSettings = {}) {
    const tracker = new Tracker(options);
    const first = feed(tracker, 0.005, firstS, (t) => [{ azimuthDeg: -40 + 20 * t, elevationDeg: null, score: 1 }]);
    const quiet = feed(tracker, firstS + 0.005, 0.6, () => []);
    const next = feed(tracker, firstS + 0.605, 0.2, () => [{ azimuthDeg: nextAz, elevationDeg: null, score: 1 }]);
    const events = [...first.events, ...quiet.events, ...next.events, ...tracker.finish()];
    return { first: [...first.ids], next: [...next.ids], events };
  }

  it('takes the mover\'s id when it lies ahead at a rate the mover could hold (45 deg on: 75 deg/s)', () => {
    const r = twoCalls(0.2, 5);
    expect(r.first).toHaveLength(1);
    expect(r.next).toEqual(r.first);
    expect(new Set(r.events.map((e) => e.track)).size).toBe(1);
  });

  it('not behind it, nor beyond --max-rate, nor ahead of a track followed for longer (a crossing caller\'s ghost)', () => {
    const behind = twoCalls(0.2, -80);
    expect(behind.next).toHaveLength(1);
    expect(behind.next).not.toEqual(behind.first);
    // 45 deg on in 0.6 s (68 deg/s) with --max-rate 60.
    const tooFast = twoCalls(0.2, 5, { maxRateDegS: 60 });
    expect(tooFast.next).not.toEqual(tooFast.first);
    // Followed for 2 s (its rate came from more than one call's worth of readings): a call 45 deg
    // ahead of where it was last heard (75 deg/s, 33 deg beyond its prediction) is another caller.
    const older = twoCalls(2, 45);
    expect(older.first).toHaveLength(1);
    expect(older.next).toHaveLength(1);
    expect(older.next).not.toEqual(older.first);
  });
});

/** Hops of 10 ms from t0 for `seconds`, each with the candidates cands(t); returns the events and the track ids reported. */
function feed(tracker: Tracker, t0: number, seconds: number, cands: (t: number) => { azimuthDeg: number; elevationDeg: number | null; score: number; underLouder?: boolean; aliasOf?: number; centreHz?: number }[]) {
  const events: EventRecord[] = [];
  const ids = new Set<number>();
  for (let t = t0; t < t0 + seconds - 1e-9; t += 0.01) {
    const candidates = cands(t);
    const sounding = candidates.length > 0;
    const u = tracker.update({ timeS: t, levelDbfs: -30, snrDb: sounding ? 30 : 0, onset: 0, confidence: sounding ? 1 : 0, candidates, freshZ: sounding ? 20 : 0 });
    events.push(...u.events);
    for (const id of u.trackIds) if (id !== null && id !== undefined) ids.add(id);
  }
  return { events, ids };
}

type Candidates = { azimuthDeg: number; elevationDeg: null; score: number; centreHz: number }[];
/**
 * A chorus at 40 deg calling 0.25 s of every second from 0.3 s (its centre chorusHz, varying by
 * +-wobble from hop to hop), settling at its home, and from 5.7 s another caller's candidates,
 * other(t), in its pauses; each hop carries one candidate with its centre. Returns the chorus'
 * track, the events that start with a chorus call, and the other events from 5.5 s on.
 */
function chorusAndCaller(seconds: number, chorusHz: number, wobble: number, other: (t: number) => Candidates) {
  const tracker = new Tracker({});
  const r = feed(tracker, 0.005, seconds, (t) => {
    if (t % 1 >= 0.3 && t % 1 < 0.55) return [{ azimuthDeg: 40, elevationDeg: null, score: 1, centreHz: chorusHz * (1 + wobble * Math.sin(37 * t)) }];
    return t >= 5.7 ? other(t) : [];
  });
  const events = [...r.events, ...tracker.finish()];
  const chorusTrack = events.find((e) => e.start_s < 0.6)!.track;
  const isChorus = (e: EventRecord) => Math.abs((e.start_s % 1) - 0.3) < 0.03;
  return { chorusTrack, chorus: events.filter(isChorus), other: events.filter((e) => e.start_s > 5.5 && !isChorus(e)) };
}
const tracksOf = (events: EventRecord[]) => [...new Set(events.map((e) => e.track))].join(', ');

describe('a settled chorus of narrow centres and a caller beside it 1.3 octaves up (BAND_APART_NARROW_OCT)', () => {
  // The chorus centred at 1 kHz on every hop; a caller 4 deg beside it, centre 2.5 kHz (1.32
  // octaves up), calls 0.1 s of every second from 5.75 s (8 calls).
  it('the caller gets a track of its own: none of its calls on the chorus track', () => {
    const r = chorusAndCaller(13, 1000, 0, (t) => (t % 1 >= 0.75 && t % 1 < 0.85 ? [{ azimuthDeg: 44, elevationDeg: null, score: 1, centreHz: 2500 }] : []));
    console.log(`settled chorus and a caller 1.3 octaves up: chorus events ${r.chorus.length} on tracks ${tracksOf(r.chorus)}; the caller's events ${r.other.length} on tracks ${tracksOf(r.other)}`);
    expect(new Set(r.chorus.map((e) => e.track))).toEqual(new Set([r.chorusTrack]));
    expect(r.other.length).toBeGreaterThanOrEqual(5);
    expect(r.other.filter((e) => e.track === r.chorusTrack)).toEqual([]);
  });
});

describe('a settled chorus whose centres barely spread and a caller beside it 0.7 octave down (OWN_BAND_SPREADS)', () => {
  // The chorus centred at 1.8 kHz within +-1.5 % (about 0.02 octave: a chorus' lone hops in the
  // motion matrix' draw 555, cho02); a caller 7 deg beside it (outside the home's gate, 5.25 deg,
  // within the chorus' reach, SETTLED_REACH_DEG), centre 1.1 kHz (0.71 octave down, inside the
  // fixed 1.2 and 1.5 octave gates), calls 0.1 s of every second from 5.75 s (8 calls).
  it('the caller gets a track of its own: none of its calls on the chorus track, every chorus call on the chorus track', () => {
    const r = chorusAndCaller(13, 1800, 0.015, (t) => (t % 1 >= 0.75 && t % 1 < 0.85 ? [{ azimuthDeg: 47, elevationDeg: null, score: 1, centreHz: 1100 * (1 + 0.03 * Math.sin(23 * t)) }] : []));
    console.log(`settled chorus of tight centres and a caller 7 deg beside, 0.7 octave down: chorus events ${r.chorus.length} on tracks ${tracksOf(r.chorus)}; the caller's events ${r.other.length} on tracks ${tracksOf(r.other)}`);
    expect(r.chorus.length).toBeGreaterThanOrEqual(12);
    expect(new Set(r.chorus.map((e) => e.track))).toEqual(new Set([r.chorusTrack]));
    expect(r.other.length).toBeGreaterThanOrEqual(5);
    expect(r.other.filter((e) => e.track === r.chorusTrack)).toEqual([]);
  });
});

describe("a slow passer 0.7 octave from a chorus crossing the chorus' home for 2.6 s (PASSING_S and the own band)", () => {
  // The chorus of the test above; from 5.7 s a caller at 55 deg moving at -4 deg/s (too slow for
  // PASSING_MOVER_S), centre 1.1 kHz, calling 0.1 s of every 0.5 s in the chorus' pauses: inside
  // the chorus' home (5.25 deg either side) from 8.1 to 10.8 s, more than PASSING_S after its last
  // call outside it.
  it("every call of the passer on one track of its own, also those on the chorus' home", () => {
    const passerAz = (t: number) => 55 - 4 * (t - 5.7);
    const r = chorusAndCaller(14, 1800, 0.015, (t) => (t % 0.5 >= 0.2 && t % 0.5 < 0.3 ? [{ azimuthDeg: passerAz(t), elevationDeg: null, score: 1, centreHz: 1100 * (1 + 0.03 * Math.sin(23 * t)) }] : []));
    const inHome = r.other.filter((e) => Math.abs(e.azimuth_deg - 40) < 5);
    console.log(`slow passer through a chorus' home: chorus events ${r.chorus.length} on tracks ${tracksOf(r.chorus)}; the passer's ${r.other.length} (${inHome.length} within 5 deg of the home) on tracks ${tracksOf(r.other)}`);
    expect(inHome.length).toBeGreaterThanOrEqual(4);
    expect(r.chorus.length).toBeGreaterThanOrEqual(13);
    expect(new Set(r.chorus.map((e) => e.track))).toEqual(new Set([r.chorusTrack]));
    expect(r.other.length).toBeGreaterThanOrEqual(16);
    expect(new Set(r.other.map((e) => e.track)).size).toBe(1);
    expect(r.other.filter((e) => e.track === r.chorusTrack)).toEqual([]);
  });
});

describe('watch list (where the analysis should look for a followed caller: src/analysis/watched-directions.ts)', () => {
  const call = (az: number) => (t: number) => (t % 0.6 < 0.12 ? [{ azimuthDeg: az, elevationDeg: null, score: 1 }] : []);
  const list = (tracker: Tracker) => {
    const az = new Float64Array(4);
    const el = new Float64Array(4);
    const half = new Float64Array(4);
    const n = tracker.watchList(az, el, half);
    return Array.from({ length: n }, (_, i) => ({ az: az[i]!, el: el[i]!, half: half[i]! }));
  };

  it('lists a confirmed track between its calls, at its prediction with its gate; not while its own caller supports it', () => {
    const tracker = new Tracker({});
    feed(tracker, 0, 3.3, call(-40));
    const watched = list(tracker);
    expect(watched).toHaveLength(1);
    expect(Math.abs(watched[0]!.az + 40)).toBeLessThan(1);
    expect(watched[0]!.el).toBeNaN();
    expect(watched[0]!.half).toBeGreaterThan(3);
    feed(tracker, 3.3, 0.03, () => [{ azimuthDeg: -40, elevationDeg: null, score: 1 }]);
    expect(list(tracker)).toHaveLength(0);
  });

  it('lists it while another caller wins the hops, but not within 10 deg of another track, nor 4 s after its last support', () => {
    const tracker = new Tracker({});
    feed(tracker, 0, 3, (t) => [...call(-40)(t), ...call(30)(t + 0.3)]);
    feed(tracker, 3, 0.1, () => [{ azimuthDeg: 30, elevationDeg: null, score: 1 }]);
    expect(list(tracker).map((w) => Math.round(w.az))).toEqual([-40]);
    // the other caller walks from 30 to -32 deg (8 deg from the first) over 2 s, calling throughout
    const near = new Tracker({});
    feed(near, 0, 3, (t) => [...call(-40)(t), ...call(30)(t + 0.3)]);
    feed(near, 3, 2, (t) => [...call(-40)(t), { azimuthDeg: 30 - 31 * (t - 3), elevationDeg: null, score: 1 }]);
    expect(near.summary()).toHaveLength(2);
    expect(list(near)).toHaveLength(0);
    // walking to -29 deg (11 deg from the first) it is listed: the clearance was 12 deg before
    // readings of two callers within 40 deg moved their tracks with twice the measurement variance (tracker.ts)
    const apart = new Tracker({});
    feed(apart, 0, 3, (t) => [...call(-40)(t), ...call(30)(t + 0.3)]);
    feed(apart, 3, 2, (t) => [...call(-40)(t), { azimuthDeg: 30 - 29.5 * (t - 3), elevationDeg: null, score: 1 }]);
    expect(apart.summary()).toHaveLength(2);
    expect(list(apart).map((w) => Math.round(w.az))).toEqual([-40]);
    feed(tracker, 3.1, 2.5, () => [{ azimuthDeg: 30, elevationDeg: null, score: 1 }]);
    expect(list(tracker).map((w) => Math.round(w.az))).toEqual([-40]);
    feed(tracker, 5.6, 1, () => [{ azimuthDeg: 30, elevationDeg: null, score: 1 }]);
    expect(list(tracker)).toHaveLength(0);
  });

  it('gives none on an array whose mirror folds azimuth (a pair)', () => {
    const tracker = new Tracker({ mirror: PAIR_X_MIRROR });
    feed(tracker, 0, 3.3, call(-40));
    expect(list(tracker)).toHaveLength(0);
  });
});

describe('a passer calling 11 degrees off a settled chorus', () => {
  // A chorus at 40 deg calls 0.25 s of every 0.7 s for 6 s (bearing noise up to 1 deg: it settles,
  // its home's spread at the 1.5 deg floor), then pauses; 0.8 s into the pause a passer calls
  // 0.12 s every 0.6 s from 51 deg, moving away at 8 deg/s, as a passer's first call came 11 deg
  // off chorus-b's home in the motion matrix (draw 6060, cho01: the chorus track took it through
  // its ordinary gate, bearing noise 3 deg wide).
  function run(): { chorusOnPasser: number; passerTracks: number[]; chorusTrack: number | null } {
    const tracker = new Tracker({});
    let s = 17;
    const noise = () => ((s = (s * 16807) % 2147483647) / 2147483647 - 0.5) * 2;
    const events: EventRecord[] = [];
    const passerTracks = new Set<number>();
    let chorusTrack: number | null = null;
    for (let i = 0; i < 1000; i++) {
      const t = 0.005 + i * 0.01;
      const chorus = t < 6 && t % 0.7 < 0.25;
      const pt = t - 6.8;
      const passer = pt >= 0 && pt % 0.6 < 0.12;
      const candidates: { azimuthDeg: number; elevationDeg: null; score: number }[] = [];
      if (chorus) candidates.push({ azimuthDeg: 40 + noise(), elevationDeg: null, score: 1 });
      if (passer) candidates.push({ azimuthDeg: 51 + 8 * pt + noise(), elevationDeg: null, score: 1 });
      const sounding = chorus || passer;
      const u = tracker.update({ timeS: t, levelDbfs: -30, snrDb: sounding ? 30 : 0, onset: 0, confidence: sounding ? 1 : 0, candidates, freshZ: sounding ? 20 : 0 });
      events.push(...u.events);
      const id = u.trackIds[0];
      if (chorus && t > 1 && id !== null && id !== undefined) chorusTrack = id;
      if (passer && id !== null && id !== undefined) passerTracks.add(id);
    }
    events.push(...tracker.finish());
    const chorusOnPasser = events.filter((e) => e.track === chorusTrack && e.start_s > 6.5).length;
    return { chorusOnPasser, passerTracks: [...passerTracks], chorusTrack };
  }

  it("does not join the chorus' track: the passer's calls open no event on it", () => {
    const r = run();
    console.log(`passer 11 deg off a settled chorus: chorus track ${r.chorusTrack}, passer on tracks ${r.passerTracks.join(', ')}, events on the chorus track after its pause ${r.chorusOnPasser}`);
    expect(r.chorusTrack).not.toBeNull();
    expect(r.passerTracks).not.toContain(r.chorusTrack);
    expect(r.chorusOnPasser).toBe(0);
  });
});

describe("a caller heard between a louder caller's pulses (the onset belongs to the louder caller)", () => {
  // A quieter caller at 120 deg calls 0.1 s every 0.5 s, alone at first; from 1.5 s a louder
  // caller at 150 deg calls 0.2 s of every 0.5 s over it, pulsing (onset 0.8 every fifth hop). In
  // the overlap the quieter caller is heard under the louder one (score 0.6) on three hops of
  // every five and not on the two around each pulse, as a crossing partner was in the motion
  // matrix (draw 555, crs01: pieces of 3 hops, shorter than --min-event, cut by the louder
  // caller's onsets and dropped).
  function run(louderTracked: boolean): { overlapped: number; withEvent: number; quietTracks: number } {
    const tracker = new Tracker({});
    const events: EventRecord[] = [];
    for (let i = 0; i < 600; i++) {
      const t = 0.005 + i * 0.01;
      const quiet = t % 0.5 < 0.1;
      const louder = t >= 1.5 && (t - 1.45) % 0.5 < 0.2;
      const k = Math.round((t - 0.005) / 0.01);
      const candidates: { azimuthDeg: number; elevationDeg: null; score: number; underLouder?: boolean }[] = [];
      if (louder && louderTracked) candidates.push({ azimuthDeg: 150, elevationDeg: null, score: 1 });
      if (quiet && !louder) candidates.push({ azimuthDeg: 120, elevationDeg: null, score: 1 });
      if (quiet && louder && k % 5 < 3) candidates.push({ azimuthDeg: 120, elevationDeg: null, score: 0.6, underLouder: true });
      const onset = louder && (k % 5 === 3 || (t - 1.45) % 0.5 < 0.01) ? 0.8 : 0.05;
      const sounding = quiet || louder;
      const u = tracker.update({ timeS: t, levelDbfs: -30, snrDb: sounding ? 30 : 0, onset, confidence: sounding ? 1 : 0, candidates, freshZ: sounding ? 20 : 0 });
      events.push(...u.events);
    }
    events.push(...tracker.finish());
    const quietEvents = events.filter((e) => Math.abs(angleDiffDeg(e.azimuth_deg, 120)) < 5);
    let overlapped = 0;
    let withEvent = 0;
    for (let c0 = 1.5; c0 < 6; c0 += 0.5) {
      overlapped++;
      if (quietEvents.some((e) => e.start_s < c0 + 0.1 && e.end_s > c0)) withEvent++;
    }
    return { overlapped, withEvent, quietTracks: new Set(quietEvents.map((e) => e.track)).size };
  }

  it("keeps an event for each of the quieter caller's calls, on one track", () => {
    const r = run(true);
    console.log(`between a louder caller's pulses: ${r.withEvent} of ${r.overlapped} overlapped calls with an event, on ${r.quietTracks} track(s)`);
    expect(r.withEvent).toBe(r.overlapped);
    expect(r.quietTracks).toBe(1);
  });

  it('with the louder caller untracked, its onsets cut those calls into pieces too short to keep (the check above can fail)', () => {
    const r = run(false);
    console.log(`louder caller untracked: ${r.withEvent} of ${r.overlapped} overlapped calls with an event`);
    expect(r.withEvent).toBeLessThan(r.overlapped / 2);
  });
});

describe('a mover heard again after seconds under a louder caller (its trend, issue 13 item 4)', () => {
  // A caller moves at -6 deg/s from -60 deg, calling 0.2 s of every 0.55 s; a stray track sits
  // at -93 deg (three short calls early on, as a blend of two callers left one in motion matrix
  // draw 2468, crs03). From 3 s to 5.6 s the mover is not heard (masked by a louder crossing
  // partner); it comes back near -94 deg, beside the stray. Bearing noise up to 1 deg.
  // moverFrom: when it is first heard (its bearing is -60 - 6 t throughout).
  function run(moverFrom: number): { before: number | null; after: (number | null)[] } {
    const tracker = new Tracker({});
    let s = 23;
    const noise = () => ((s = (s * 16807) % 2147483647) / 2147483647 - 0.5) * 2;
    let before: number | null = null;
    const after: (number | null)[] = [];
    for (let i = 0; i < 800; i++) {
      const t = 0.005 + i * 0.01;
      const mover = t >= moverFrom && (t - moverFrom) % 0.55 < 0.2 && !(t >= 3 && t < 5.6);
      const stray = t >= 0.4 && t < 1.6 && t % 0.4 < 0.1;
      const candidates: { azimuthDeg: number; elevationDeg: null; score: number }[] = [];
      if (mover) candidates.push({ azimuthDeg: -60 - 6 * t + noise(), elevationDeg: null, score: 1 });
      if (stray) candidates.push({ azimuthDeg: -93 + noise(), elevationDeg: null, score: 1 });
      const sounding = candidates.length > 0;
      const u = tracker.update({ timeS: t, levelDbfs: -30, snrDb: sounding ? 30 : 0, onset: 0, confidence: sounding ? 1 : 0, candidates, freshZ: sounding ? 20 : 0 });
      const id = mover ? (u.trackIds[0] ?? null) : null;
      if (mover && t < 3 && id !== null) before = id;
      if (mover && t >= 5.6) after.push(id);
    }
    return { before, after };
  }

  it('keeps its id: its lifetime drift carries its gate on while it is not heard', () => {
    const r = run(0.005);
    const kept = r.after.filter((id) => id === r.before).length;
    console.log(`mover back beside a stray: id before ${r.before}, after ${[...new Set(r.after)].join(', ')} (${kept} of ${r.after.length} hops on it)`);
    expect(r.before).not.toBeNull();
    expect(kept).toBeGreaterThanOrEqual(0.9 * r.after.length);
  });

  it('followed for under 2 s before it went unheard (no trend yet), it loses those hops to the stray (the check above can fail)', () => {
    const r = run(1.2);
    const kept = r.after.filter((id) => id === r.before).length;
    console.log(`young mover back beside a stray: id before ${r.before}, after ${[...new Set(r.after)].join(', ')} (${kept} of ${r.after.length} hops on it)`);
    expect(kept).toBeLessThan(0.9 * r.after.length);
  });
});

describe('a caller read at an aliased lobe (candidates aliasOf: src/analysis/watched-directions.ts)', () => {
  // A caller moves -60 -> +20 deg at 16 deg/s, calling 0.15 s of every 0.5 s. From its fourth
  // call on, every other call is read at a lobe 35 deg ahead of it (the hop's answer), as a
  // high sweep on a 20 cm square was in the motion matrix (draw 6060, pas15: -22 deg read at 12);
  // with aliases the analysis also reports the caller's own direction, which the lobe's sound
  // fits as well, as the answer's alias (score 0.9). Bearing noise up to 1 deg.
  const moverAz = (t: number) => -60 + 16 * t;
  function runMover(withAliases: boolean, lobeDeg = 35) {
    const tracker = new Tracker({});
    let s = 11;
    const noise = () => ((s = (s * 16807) % 2147483647) / 2147483647 - 0.5) * 2;
    const r = feed(tracker, 0.005, 5, (t) => {
      const k = Math.floor(t / 0.5);
      if (t - 0.5 * k >= 0.15) return [];
      const az = moverAz(t);
      if (k < 3 || k % 2 === 0) return [{ azimuthDeg: az + noise(), elevationDeg: null, score: 1 }];
      const lobe = { azimuthDeg: az + lobeDeg + noise(), elevationDeg: null, score: 1 };
      return withAliases ? [lobe, { azimuthDeg: az + noise(), elevationDeg: null, score: 0.9, aliasOf: 0 }] : [lobe];
    });
    const events = [...r.events, ...tracker.finish()];
    const tracks = new Set(events.map((e) => e.track));
    const onCaller = events.filter((e) => Math.abs(angleDiffDeg(e.azimuth_deg, moverAz((e.start_s + e.end_s) / 2))) <= 5);
    const calls = Array.from({ length: 10 }, (_, k) => k).filter((k) => onCaller.some((e) => e.start_s < 0.5 * k + 0.15 && e.end_s > 0.5 * k));
    return { tracks: [...tracks], events, calls: calls.length, atLobe: events.filter((e) => Math.abs(angleDiffDeg(e.azimuth_deg, moverAz((e.start_s + e.end_s) / 2) + lobeDeg)) <= 5).length };
  }

  it('with the aliases: one track, an event at the caller for each of its 10 calls, none at the lobe', () => {
    const r = runMover(true);
    console.log(`aliased lobe, with aliases: tracks ${r.tracks.join(', ')}; calls with an event at the caller ${r.calls} of 10; events at the lobe ${r.atLobe}`);
    expect(r.tracks).toHaveLength(1);
    expect(r.calls).toBe(10);
    expect(r.atLobe).toBe(0);
  });

  it('a lobe inside the track\'s gate but farther from its prediction than the alias: the track keeps to the alias (its nearer reading)', () => {
    // The lobe 12 deg ahead lies within the gate of the mover's track after a 0.35 s pause; the
    // alias at the caller lies nearer. Before the tracker weighed the two by cost it dropped an
    // alias whenever a track could take its answer: the lobe calls moved the track to the lobe.
    const r = runMover(true, 12);
    console.log(`lobe 12 deg ahead, with aliases: tracks ${r.tracks.join(', ')}; calls with an event at the caller ${r.calls} of 10; events at the lobe ${r.atLobe}`);
    expect(r.tracks).toHaveLength(1);
    expect(r.calls).toBe(10);
    expect(r.atLobe).toBe(0);
  });

  it('without them (the lobe alone): the lobe calls make events of their own, at the lobe', () => {
    const r = runMover(false);
    console.log(`aliased lobe, without aliases: tracks ${r.tracks.join(', ')}; calls with an event at the caller ${r.calls} of 10; events at the lobe ${r.atLobe}`);
    expect(r.atLobe).toBeGreaterThan(0);
    expect(r.calls).toBeLessThan(10);
  });

  it('an alias whose answer a confirmed track explains is dropped: a chorus keeps its hops and the mover gets no events from them', () => {
    // A chorus at 0 deg calls 0.2 s of every 0.5 s, between the mover's calls (3 s: the mover
    // stays 12 deg or more from the chorus); while the mover is within 8 deg of -40 deg
    // (0.75-1.75 s), each chorus hop also carries an alias at -40 (a lobe of the chorus' sound
    // where the mover's track is predicted).
    const tracker = new Tracker({});
    const r = feed(tracker, 0.005, 3, (t) => {
      const phase = t % 0.5;
      if (phase < 0.15) return [{ azimuthDeg: moverAz(t), elevationDeg: null, score: 1 }];
      if (phase < 0.25 || phase >= 0.45) return [];
      const chorus = { azimuthDeg: 0, elevationDeg: null, score: 1 };
      return Math.abs(moverAz(t) + 40) <= 8 ? [chorus, { azimuthDeg: -40, elevationDeg: null, score: 0.9, aliasOf: 0 }] : [chorus];
    });
    const events = [...r.events, ...tracker.finish()];
    const chorus = events.filter((e) => Math.abs(e.azimuth_deg) <= 3);
    const moverTrack = events.find((e) => e.start_s < 0.15)!.track;
    const moverInPauses = events.filter((e) => e.track === moverTrack && (e.start_s + 1e-6) % 0.5 >= 0.2);
    console.log(`alias of an explained answer: chorus events ${chorus.length} on tracks ${[...new Set(chorus.map((e) => e.track))].join(', ')}; events of the mover's track starting in its pauses ${moverInPauses.length}`);
    expect(chorus.length).toBe(6);
    expect(new Set(chorus.map((e) => e.track)).size).toBe(1);
    expect(moverInPauses).toEqual([]);
  });

  it('aliases alone do not keep a track: a mover gone quiet does not take a new caller whose sound fits where it was', () => {
    // The mover calls until 2 s, then stops at -28 deg; from 2.5 s a new caller at 40 deg calls
    // 0.2 s of every 0.5 s, each of its hops carrying an alias at -28 (where the mover's track
    // coasts). Aliases go only to a track moved by its own candidates within ALIAS_WITHIN_S.
    const tracker = new Tracker({});
    const r = feed(tracker, 0.005, 6, (t) => {
      if (t < 2) return t % 0.5 < 0.15 ? [{ azimuthDeg: moverAz(t), elevationDeg: null, score: 1 }] : [];
      if (t < 2.5 || t % 0.5 >= 0.2) return [];
      return [{ azimuthDeg: 40, elevationDeg: null, score: 1 }, { azimuthDeg: -28, elevationDeg: null, score: 0.9, aliasOf: 0 }];
    });
    const events = [...r.events, ...tracker.finish()];
    const newcomer = events.filter((e) => Math.abs(angleDiffDeg(e.azimuth_deg, 40)) <= 3);
    const moverTrack = events.find((e) => e.start_s < 0.15)!.track;
    const moverLate = events.filter((e) => e.track === moverTrack && e.start_s > 3.5);
    console.log(`aliases alone: newcomer events ${newcomer.length} (of 7 calls) on tracks ${[...new Set(newcomer.map((e) => e.track))].join(', ')}; mover's track events after 3.5 s ${moverLate.length}`);
    expect(newcomer.length).toBeGreaterThanOrEqual(5);
    expect(newcomer.every((e) => e.track !== moverTrack)).toBe(true);
    expect(moverLate).toEqual([]);
  });
});

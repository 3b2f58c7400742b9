/**
 * Event matching across stations: which events at different stations are the same call.
 * Two events at stations i and j can be one call when their onset times (true time, clock
 * offsets applied) differ by at most
 *     distance(i, j) / c + clock uncertainty(i) + clock uncertainty(j) + slack
 * (sound cannot take longer than the straight path between the stations to reach the second
 * one after the first), and, when both carry band_hz, their bands overlap.
 * Greedy in time order: the earliest unassigned event seeds a group; candidates from the
 * other stations that fit the window of every member are ranked by how well they agree with
 * the group as one source: the point where the bearing lines meet predicts when the call
 * reached the candidate (emission + range / c), and with three or more lines also where the
 * candidate's bearing should point. The best candidate joins, one station at a time; a
 * candidate whose bearing line meets the group's behind a station, or whose time or bearing
 * misses the group by more than the gate (the solver's outlier threshold), is not the same call.
 * A group of two or more stations is a call. Pure: events in, groups out.
 *
 * The matcher is incremental (CallMatcher): events are added as they come, and a seed is
 * decided once every event that could join it can have arrived (`decide(now, wait)`); the
 * file mode adds all events and decides them all at once (`matchEvents`), the live mode
 * (live-locator.ts) decides on a clock. Both make the same groups from the same events.
 */
import type { StationEvent } from './events.js';
import { largestCrossingDeg, meetLines } from './intersect.js';

export interface MatchSettings {
  speedOfSound: number;
  slackS: number;
  /** Distance between two stations, metres. */
  distanceM: (a: string, b: string) => number;
  /** Residual clock uncertainty of a station, seconds. */
  clockUncertaintyS: (station: string) => number;
  /** Station position (east, north) on the plane, metres. */
  at: (station: string) => readonly [number, number];
  /** Unit direction (east, north) of an event's bearing on the plane. */
  direction: (event: StationEvent) => readonly [number, number];
  /** One-sigma bearing uncertainty of a station, radians. */
  bearingSdRad: (station: string) => number;
  /** One-sigma onset-time uncertainty, seconds. */
  onsetSdS: number;
  /** Lines crossing at less than this (degrees) give no usable meeting point. */
  minCrossingDeg: number;
  /**
   * A candidate whose time or bearing misses the group by more than this many sigmas is not
   * the same call (the solver's outlier threshold); Infinity = no gate.
   */
  gateSigma: number;
}

export interface MatchResult {
  groups: StationEvent[][];
  /** Events that matched no other station. */
  unmatched: StationEvent[];
}

export function bandsOverlap(a: StationEvent, b: StationEvent): boolean {
  if (a.band === null || b.band === null) return true;
  return a.band[0] <= b.band[1] && b.band[0] <= a.band[1];
}

/** Index of the first element with timeS >= t (events sorted by time). */
function lowerBound(list: readonly StationEvent[], t: number): number {
  let lo = 0;
  let hi = list.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (list[mid]!.timeS < t) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/** Where the group's bearing lines meet (unweighted least squares), or null if they are nearly parallel. */
function meetingPoint(group: readonly StationEvent[], s: MatchSettings): [number, number] | null {
  const lines = group.map((e) => ({ at: s.at(e.station), dir: s.direction(e) }));
  return largestCrossingDeg(lines) < s.minCrossingDeg ? null : meetLines(lines);
}

/**
 * How badly a candidate disagrees with the group as one source (a sum of squared sigmas),
 * or null when it cannot be the same call: the lines would meet behind a station, or its
 * arrival time or its bearing misses by more than the gate.
 */
export function disagreement(
  group: readonly StationEvent[],
  cand: StationEvent,
  s: MatchSettings,
  windowS: number,
  /** The group's meeting point when already known (groups of two or more). */
  groupPoint?: [number, number] | null,
): number | null {
  const withCand = [...group, cand];
  const x = group.length >= 2 && groupPoint !== undefined ? groupPoint : meetingPoint(group.length >= 2 ? group : withCand, s);
  if (x === null) {
    // No usable geometry: closeness in time to the seed, the window's edge counting as 3 sigma.
    return 9 * ((cand.timeS - group[0]!.timeS) / windowS) ** 2;
  }
  const range = (e: StationEvent): number => {
    const at = s.at(e.station);
    return Math.hypot(x[0] - at[0], x[1] - at[1]);
  };
  // Emission time from the group, predicted arrival at the candidate's station.
  const emission = group.reduce((acc, e) => acc + e.timeS - range(e) / s.speedOfSound, 0) / group.length;
  // The meeting point is itself uncertain by about range x bearing sigma across each line;
  // that shifts the predicted arrival by up to that distance over c.
  const geometryM = Math.max(1, ...withCand.map((e) => range(e) * s.bearingSdRad(e.station)));
  const sdT = Math.hypot(s.onsetSdS, s.clockUncertaintyS(cand.station), s.clockUncertaintyS(group[0]!.station), geometryM / s.speedOfSound);
  const gate = s.gateSigma ** 2;
  const timeTerm = ((cand.timeS - (emission + range(cand) / s.speedOfSound)) / sdT) ** 2;
  if (timeTerm > gate) return null;
  const xFull = group.length >= 2 ? meetingPoint(withCand, s) ?? x : x;
  for (const e of withCand) {
    const [ux, uy] = s.direction(e);
    const [px, py] = s.at(e.station);
    if (ux * (xFull[0] - px) + uy * (xFull[1] - py) <= 0) return null;
  }
  let score = timeTerm;
  if (group.length >= 2) {
    const [ux, uy] = s.direction(cand);
    const [px, py] = s.at(cand.station);
    const miss = uy * (x[0] - px) - ux * (x[1] - py);
    const sdM = Math.max(1, range(cand) * s.bearingSdRad(cand.station));
    const bearingTerm = (miss / sdM) ** 2;
    if (bearingTerm > gate) return null;
    score += bearingTerm;
  }
  return score;
}

/** The window (seconds) within which events at stations a and b can be one call. */
export function matchWindowS(s: MatchSettings, a: string, b: string): number {
  return s.distanceM(a, b) / s.speedOfSound + s.clockUncertaintyS(a) + s.clockUncertaintyS(b) + s.slackS;
}

/** The settings with each event's direction worked out once (it is asked for many times). */
export function cachedDirections(s: MatchSettings): MatchSettings {
  const dirs = new WeakMap<StationEvent, readonly [number, number]>();
  return {
    ...s,
    direction: (e) => {
      let d = dirs.get(e);
      if (d === undefined) {
        d = s.direction(e);
        dirs.set(e, d);
      }
      return d;
    },
  };
}

/**
 * Incremental matching. Events wait per station in time order; `decide` takes the earliest
 * waiting event as the seed and builds its group from the waiting events of the other stations
 * (greedy, as described at the top), in time order, as long as the seed's deadline has passed:
 * seed time + the widest window from its station + `waitS`. Decided events leave the matcher,
 * so memory holds only what is still undecided.
 */
export class CallMatcher {
  private readonly s: MatchSettings;
  private readonly ids: string[];
  private readonly waiting = new Map<string, StationEvent[]>();
  private readonly index = new Map<string, number>();
  /** window(a, b) by station index: row a, column b. */
  private readonly windows: Float64Array;
  private widest = 0;
  private count = 0;
  /** Time of the newest seed decided (-Infinity before the first). */
  lastSeedS = -Infinity;

  /** `stations`: every station id, in the station file's order (ties in time go by it). */
  constructor(settings: MatchSettings, stations: readonly string[]) {
    this.s = cachedDirections(settings);
    this.ids = [...stations];
    const n = this.ids.length;
    this.windows = new Float64Array(n * n);
    this.ids.forEach((id, i) => {
      this.waiting.set(id, []);
      this.index.set(id, i);
    });
    this.ids.forEach((a, i) =>
      this.ids.forEach((b, j) => {
        if (i === j) return;
        const w = matchWindowS(settings, a, b);
        this.windows[i * n + j] = w;
        this.widest = Math.max(this.widest, w);
      }),
    );
  }

  /** Events waiting for a decision. */
  get pending(): number {
    return this.count;
  }

  window(a: string, b: string): number {
    const i = this.index.get(a);
    const j = this.index.get(b);
    return i === undefined || j === undefined ? matchWindowS(this.s, a, b) : this.windows[i * this.ids.length + j]!;
  }

  /** The widest window from a station to any of `others` (all stations when not given). */
  reach(station: string, others: readonly string[] = this.ids): number {
    let r = 0;
    for (const o of others) if (o !== station) r = Math.max(r, this.window(station, o));
    return r;
  }

  add(e: StationEvent): void {
    const list = this.waiting.get(e.station);
    if (list === undefined) throw new Error(`station '${e.station}' is not one of the matcher's stations`);
    let k = list.length;
    while (k > 0 && list[k - 1]!.timeS > e.timeS) k--;
    list.splice(k, 0, e);
    this.count++;
  }

  /** The earliest waiting event (ties: station order), or null. */
  private earliest(): StationEvent | null {
    let best: StationEvent | null = null;
    for (const id of this.ids) {
      const head = this.waiting.get(id)![0];
      if (head !== undefined && (best === null || head.timeS < best.timeS)) best = head;
    }
    return best;
  }

  /**
   * Decide every seed whose deadline (seed time + reach(seed, online) + waitS) is at or before
   * nowS, and the earliest seeds beyond `maxPending` waiting events whatever their deadline.
   * `online`: the stations to wait for (default all). Returns the groups and unmatched events.
   */
  decide(nowS: number, waitS: number, options: { online?: readonly string[]; maxPending?: number } = {}): MatchResult & { forced: number } {
    const out: MatchResult & { forced: number } = { groups: [], unmatched: [], forced: 0 };
    const online = options.online ?? this.ids;
    const maxPending = options.maxPending ?? Infinity;
    for (;;) {
      const seed = this.earliest();
      if (seed === null) break;
      const due = seed.timeS + this.reach(seed.station, online) + waitS <= nowS;
      if (!due && this.count <= maxPending) break;
      if (!due) out.forced++;
      this.decideSeed(seed, out);
    }
    return out;
  }

  /** Decide everything waiting (the file mode; a clean stop). */
  flush(): MatchResult {
    const { groups, unmatched } = this.decide(Infinity, 0);
    return { groups, unmatched };
  }

  private remove(e: StationEvent): void {
    const list = this.waiting.get(e.station)!;
    const k = list.indexOf(e);
    if (k >= 0) {
      list.splice(k, 1);
      this.count--;
    }
  }

  private decideSeed(seed: StationEvent, out: MatchResult): void {
    this.lastSeedS = Math.max(this.lastSeedS, seed.timeS);
    const group: StationEvent[] = [seed];
    const fitsGroup = (g: readonly StationEvent[], e: StationEvent): boolean =>
      g.every((m) => Math.abs(e.timeS - m.timeS) <= this.window(m.station, e.station) && bandsOverlap(m, e));
    const candidates = (g: readonly StationEvent[]): StationEvent[] => {
      const found: StationEvent[] = [];
      for (const id of this.ids) {
        if (g.some((m) => m.station === id)) continue;
        const list = this.waiting.get(id)!;
        // Every member must fit the seed's window, so the seed's window bounds the search.
        const w = this.window(seed.station, id);
        for (let k = lowerBound(list, seed.timeS - w); k < list.length && list[k]!.timeS <= seed.timeS + w; k++) {
          if (list[k] !== seed && fitsGroup(g, list[k]!)) found.push(list[k]!);
        }
      }
      return found;
    };
    // A group's meeting point does not depend on the candidate: work it out once per group.
    const points = new Map<readonly StationEvent[], [number, number] | null>();
    const pointOf = (g: readonly StationEvent[]): [number, number] | null => {
      let p = points.get(g);
      if (p === undefined) {
        p = meetingPoint(g, this.s);
        points.set(g, p);
      }
      return p;
    };
    const score = (g: readonly StationEvent[], e: StationEvent): number | null =>
      disagreement(g, e, this.s, this.window(seed.station, e.station), g.length >= 2 ? pointOf(g) : undefined);
    for (;;) {
      let best: StationEvent | null = null;
      let bestScore = Infinity;
      for (const e of candidates(group)) {
        let sc = score(group, e);
        if (sc === null) continue;
        // A pair alone is barely checked (two lines always meet): look one station ahead and
        // add the best third line's disagreement, which tests the bearings against each other.
        if (group.length === 1) {
          const pair = [...group, e];
          let ahead = Infinity;
          for (const f of candidates(pair)) {
            const sf = score(pair, f);
            if (sf !== null && sf < ahead) ahead = sf;
          }
          if (Number.isFinite(ahead)) sc += ahead;
        }
        if (sc < bestScore) {
          best = e;
          bestScore = sc;
        }
      }
      if (best === null) break;
      points.delete(group);
      group.push(best);
    }
    for (const g of group) this.remove(g);
    if (group.length >= 2) out.groups.push(group);
    else out.unmatched.push(seed);
  }
}

/** Match a whole set of events at once (the file mode): the incremental matcher with everything in. */
export function matchEvents(events: readonly StationEvent[], s: MatchSettings, stations?: readonly string[]): MatchResult {
  const ids = stations ?? [...new Set(events.map((e) => e.station))];
  const m = new CallMatcher(s, ids);
  for (const e of events) m.add(e);
  return m.flush();
}

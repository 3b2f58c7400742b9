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
 * candidate whose bearing line meets the group's behind a station is not the same call.
 * A group of two or more stations is a call. Pure: events in, groups out.
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
}

export interface MatchResult {
  groups: StationEvent[][];
  /** Events that matched no other station. */
  unmatched: StationEvent[];
}

function bandsOverlap(a: StationEvent, b: StationEvent): boolean {
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
 * or null when it cannot be the same call (the lines would meet behind a station).
 */
function disagreement(group: readonly StationEvent[], cand: StationEvent, s: MatchSettings, windowS: number): number | null {
  const withCand = [...group, cand];
  const x = meetingPoint(group.length >= 2 ? group : withCand, s);
  if (x === null) {
    // No usable geometry: closeness in time to the seed, the window's edge counting as 3 sigma.
    return 9 * ((cand.timeS - group[0]!.timeS) / windowS) ** 2;
  }
  const range = (e: StationEvent): number => Math.hypot(x[0] - s.at(e.station)[0], x[1] - s.at(e.station)[1]);
  const xFull = group.length >= 2 ? meetingPoint(withCand, s) ?? x : x;
  for (const e of withCand) {
    const [ux, uy] = s.direction(e);
    const [px, py] = s.at(e.station);
    if (ux * (xFull[0] - px) + uy * (xFull[1] - py) <= 0) return null;
  }
  // Emission time from the group, predicted arrival at the candidate's station.
  const emission = group.reduce((acc, e) => acc + e.timeS - range(e) / s.speedOfSound, 0) / group.length;
  // The meeting point is itself uncertain by about range x bearing sigma across each line;
  // that shifts the predicted arrival by up to that distance over c.
  const geometryM = Math.max(1, ...withCand.map((e) => range(e) * s.bearingSdRad(e.station)));
  const sdT = Math.hypot(s.onsetSdS, s.clockUncertaintyS(cand.station), s.clockUncertaintyS(group[0]!.station), geometryM / s.speedOfSound);
  let score = ((cand.timeS - (emission + range(cand) / s.speedOfSound)) / sdT) ** 2;
  if (group.length >= 2) {
    const [ux, uy] = s.direction(cand);
    const [px, py] = s.at(cand.station);
    const miss = uy * (x[0] - px) - ux * (x[1] - py);
    const sdM = Math.max(1, range(cand) * s.bearingSdRad(cand.station));
    score += (miss / sdM) ** 2;
  }
  return score;
}

export function matchEvents(events: readonly StationEvent[], s: MatchSettings): MatchResult {
  // Each event's direction is asked for many times: work it out once.
  const dirs = new Map<StationEvent, readonly [number, number]>();
  const settings: MatchSettings = {
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
  const byStation = new Map<string, StationEvent[]>();
  for (const e of events) {
    const list = byStation.get(e.station) ?? [];
    list.push(e);
    byStation.set(e.station, list);
  }
  for (const list of byStation.values()) list.sort((a, b) => a.timeS - b.timeS);
  const ids = [...byStation.keys()];
  const windowS = (a: string, b: string): number =>
    s.distanceM(a, b) / s.speedOfSound + s.clockUncertaintyS(a) + s.clockUncertaintyS(b) + s.slackS;
  let widest = 0;
  for (const a of ids) for (const b of ids) if (a !== b) widest = Math.max(widest, windowS(a, b));

  const used = new Set<StationEvent>();
  const all = [...events].sort((a, b) => a.timeS - b.timeS);
  const groups: StationEvent[][] = [];
  const unmatched: StationEvent[] = [];
  for (const seed of all) {
    if (used.has(seed)) continue;
    const group: StationEvent[] = [seed];
    const fitsGroup = (g: readonly StationEvent[], e: StationEvent): boolean =>
      !used.has(e) && g.every((m) => Math.abs(e.timeS - m.timeS) <= windowS(m.station, e.station) && bandsOverlap(m, e));
    const candidates = (g: readonly StationEvent[]): StationEvent[] => {
      const out: StationEvent[] = [];
      for (const id of ids) {
        if (g.some((m) => m.station === id)) continue;
        const list = byStation.get(id)!;
        for (let k = lowerBound(list, seed.timeS - widest); k < list.length && list[k]!.timeS <= seed.timeS + widest; k++) {
          if (fitsGroup(g, list[k]!)) out.push(list[k]!);
        }
      }
      return out;
    };
    const score = (g: readonly StationEvent[], e: StationEvent): number | null => disagreement(g, e, settings, windowS(seed.station, e.station));
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
      group.push(best);
    }
    if (group.length >= 2) {
      for (const g of group) used.add(g);
      groups.push(group);
    } else {
      used.add(seed);
      unmatched.push(seed);
    }
  }
  return { groups, unmatched };
}

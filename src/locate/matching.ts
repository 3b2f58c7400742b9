/**
 * Event matching across stations: which events at different stations are the same call.
 * Two events at stations i and j can be one call when their onset times (true time, clock
 * offsets applied) differ by at most
 *     distance(i, j) / c + clock uncertainty(i) + clock uncertainty(j) + slack
 * (sound cannot take longer than the straight path between the stations to reach the second
 * one after the first), and, when both carry band_hz, their bands overlap.
 * Greedy in time order: the earliest unassigned event seeds a group; the compatible event
 * closest in time from each other station joins it (compatible with every member so far).
 * A group of two or more stations is a call. Pure: events in, groups out.
 */
import type { StationEvent } from './events.js';

export interface MatchSettings {
  speedOfSound: number;
  slackS: number;
  /** Distance between two stations, metres. */
  distanceM: (a: string, b: string) => number;
  /** Residual clock uncertainty of a station, seconds. */
  clockUncertaintyS: (station: string) => number;
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

export function matchEvents(events: readonly StationEvent[], s: MatchSettings): MatchResult {
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
    const fits = (e: StationEvent): boolean =>
      !used.has(e) && group.every((g) => Math.abs(e.timeS - g.timeS) <= windowS(g.station, e.station) && bandsOverlap(g, e));
    for (;;) {
      let best: StationEvent | null = null;
      for (const id of ids) {
        if (group.some((g) => g.station === id)) continue;
        const list = byStation.get(id)!;
        for (let k = lowerBound(list, seed.timeS - widest); k < list.length && list[k]!.timeS <= seed.timeS + widest; k++) {
          const e = list[k]!;
          if (!fits(e)) continue;
          if (best === null || Math.abs(e.timeS - seed.timeS) < Math.abs(best.timeS - seed.timeS)) best = e;
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

/**
 * Live locating, pure: events of the stations come in as they arrive (each with its own onset
 * time), station states come from their retained status, and a clock (`nowS`, seconds since
 * 1970, given by the caller) decides when a call has waited long enough. Out come fixes to
 * publish, each with an id that a revision keeps.
 *
 *  - Matching and fixing are the file mode's (CallMatcher, locateGroup): a seed is decided
 *    when every station that is online can have reported the same call: seed time + the
 *    sound's travel time and clock uncertainty to the farthest such station + --match-slack
 *    + --event-latency. The fix then carries what it has (`stations`).
 *  - A late event (it comes after the call it belongs to was decided) is matched against the
 *    decided calls and lone events of the same time, with the matcher's window and score. It
 *    is counted as late; joining a published call it gives a revised fix (same id, revision
 *    + 1) only with --revise; joining a lone event it gives a new fix.
 *  - A station that is offline is not waited for. Its backlog, when it returns, is late by
 *    nature; those events are matched the same way and their fixes are always published,
 *    marked `backfill`.
 *  - Held: the undecided events (bounded by time and by --max-pending) and the decided calls
 *    of the last --backfill-window seconds (at most --max-history).
 */
import type { EventRecord } from '../records/record-types.js';
import { type StationEvent, toStationEvents } from './events.js';
import { type LocatedCall, locateGroup, matchSettingsFor } from './locate.js';
import { CallMatcher, type MatchSettings, bandsOverlap, cachedDirections, disagreement } from './matching.js';
import type { LiveLocateOptions } from './live-options.js';
import type { LocateOptions } from './options.js';
import type { PlacedStation, PlacedStations } from './stations.js';
import { formatUtc } from './time.js';

/** A fix to publish. */
export interface LiveFix {
  /** Stable id: a revision of the fix keeps it. */
  id: string;
  /** 0 for the first publication, then 1, 2, ... */
  revision: number;
  /** Made or revised by a returning station's backlog. */
  backfill: boolean;
  call: LocatedCall;
}

export interface LiveCounts {
  /** Fixes published for the first time. */
  fixes: number;
  /** Revised fixes published (late events with --revise, and backfill). */
  revised: number;
  /** Events of a returning station's backlog that joined a call. */
  backfilled: number;
  /** Events that came after the call they belong to was decided (not backlog). */
  late: number;
  /** Events decided without a partner at another station. */
  unmatched: number;
  /** Calls matched at two or more stations that gave no fix (poor geometry, behind a station; see --include-unfixed). */
  unfixed: number;
  /** Events older than --backfill-window when they came, left out. */
  stale: number;
  /** Seeds decided before their time because more than --max-pending events waited. */
  forced: number;
  /** Messages received twice (same seq) and left out. */
  repeats: number;
  /** Messages that never came (gaps in a station's seq). */
  lost: number;
  /** Events waiting for a decision now. */
  pending: number;
  /** Decided calls and lone events kept for late events now. */
  kept: number;
}

/** A decided call (two or more stations) or a lone event, kept for late events. */
interface Decided {
  /** Earliest onset of its events. */
  timeS: number;
  events: StationEvent[];
  /** Id once published (groups only), else null. */
  id: string | null;
  revision: number;
}

interface StationState {
  station: PlacedStation;
  /** null: no status seen yet (waited for, like an online station). */
  online: boolean | null;
  /** When the station's latest return was seen (seconds since 1970), null if it never left. */
  returnedAtS: number | null;
  lastSeq: number;
  /** Said once: events without a UTC time cannot be placed on the clock. */
  saidNoUtc: boolean;
}

export type EventOutcome = { fixes: LiveFix[]; note: string | null };

function insertByTime(list: Decided[], d: Decided): void {
  let k = list.length;
  while (k > 0 && list[k - 1]!.timeS > d.timeS) k--;
  list.splice(k, 0, d);
}

export class LiveLocator {
  private readonly settings: MatchSettings;
  private readonly matcher: CallMatcher;
  private readonly stations = new Map<string, StationState>();
  private readonly ids: string[];
  /** Decided calls and lone events, by time. */
  private readonly decided: Decided[] = [];
  private readonly n = { fixes: 0, revised: 0, backfilled: 0, late: 0, unmatched: 0, unfixed: 0, stale: 0, forced: 0, repeats: 0, lost: 0 };

  constructor(
    private readonly placed: PlacedStations,
    private readonly options: LocateOptions,
    private readonly live: LiveLocateOptions,
    /** time_s of a fix counts from here (seconds since 1970): the start of the run. */
    private readonly timeZeroS: number,
  ) {
    this.settings = cachedDirections(matchSettingsFor(placed, options));
    this.ids = placed.stations.map((s) => s.id);
    this.matcher = new CallMatcher(this.settings, this.ids);
    for (const st of placed.stations) this.stations.set(st.id, { station: st, online: null, returnedAtS: null, lastSeq: 0, saidNoUtc: false });
  }

  /** The station's retained status says online or offline; returns a line to say (once per change) or null. */
  stationState(id: string, online: boolean, nowS: number): string | null {
    const st = this.stations.get(id);
    if (st === undefined || st.online === online) return null;
    const before = st.online;
    st.online = online;
    if (!online) return `station '${id}' is offline: left out of matching until it returns (its backlog is matched then, as backfill)`;
    if (before === false) {
      st.returnedAtS = nowS;
      return `station '${id}' is back online: its backlog is matched against the calls of the same time (fixes marked backfill)`;
    }
    return null;
  }

  /** Is this message new? Drops repeats (same or older seq) and counts gaps; a seq of 1 after others is a station that started its count again. */
  acceptSeq(id: string, seq: number): boolean {
    const st = this.stations.get(id);
    if (st === undefined) return false;
    if (seq <= st.lastSeq && seq !== 1) {
      this.n.repeats++;
      return false;
    }
    if (st.lastSeq > 0 && seq > st.lastSeq + 1) this.n.lost += seq - st.lastSeq - 1;
    st.lastSeq = seq;
    return true;
  }

  /** An event record of a station as received. `origin` names it in the output (e.g. "north#17"). */
  event(id: string, record: EventRecord, origin: string, nowS: number): EventOutcome {
    const st = this.stations.get(id);
    if (st === undefined) return { fixes: [], note: null };
    const ev = toStationEvents(st.station, [record], [origin])[0]!;
    if (!ev.absolute) {
      if (st.saidNoUtc) return { fixes: [], note: null };
      st.saidNoUtc = true;
      return { fixes: [], note: `station '${id}' sends events without "utc" and has no stream_start_utc: its events cannot be placed in time and are left out` };
    }
    if (ev.timeS < nowS - this.live.backfillWindowS) {
      this.n.stale++;
      return { fixes: [], note: null };
    }
    if (ev.timeS <= this.matcher.lastSeedS + this.matcher.reach(id)) {
      const fit = this.bestDecided(ev);
      if (fit !== null) return { fixes: this.attachLate(ev, fit, st, nowS), note: null };
    }
    this.matcher.add(ev);
    return { fixes: [], note: null };
  }

  /** Decide the calls whose wait is over; forget what is older than --backfill-window. */
  tick(nowS: number): LiveFix[] {
    const online = this.ids.filter((id) => this.stations.get(id)!.online !== false);
    const r = this.matcher.decide(nowS, this.live.eventLatencyS, { online, maxPending: this.live.maxPending });
    this.n.forced += r.forced;
    const out = this.take(r.groups, r.unmatched);
    this.forget(nowS);
    return out;
  }

  /** Decide everything still waiting with what it has (a clean stop). */
  flush(): LiveFix[] {
    const r = this.matcher.flush();
    return this.take(r.groups, r.unmatched);
  }

  counts(): LiveCounts {
    return { ...this.n, pending: this.matcher.pending, kept: this.decided.length };
  }

  private take(groups: StationEvent[][], unmatched: StationEvent[]): LiveFix[] {
    const out: LiveFix[] = [];
    for (const e of unmatched) {
      this.n.unmatched++;
      insertByTime(this.decided, { timeS: e.timeS, events: [e], id: null, revision: -1 });
    }
    for (const g of groups) {
      const d: Decided = { timeS: Math.min(...g.map((e) => e.timeS)), events: g, id: null, revision: -1 };
      insertByTime(this.decided, d);
      const fix = this.publish(d, false);
      if (fix !== null) out.push(fix);
    }
    return out;
  }

  /** Fix a decided call; a fix to publish, or null when it has none (and --include-unfixed is off). */
  private publish(d: Decided, backfill: boolean): LiveFix | null {
    const call = locateGroup(this.placed, d.events, this.options, this.timeZeroS);
    if (!call.fix.ok && !this.options.includeUnfixed && d.id === null) {
      this.n.unfixed++;
      return null;
    }
    if (d.id === null) {
      const first = d.events.reduce((a, b) => (b.timeS < a.timeS ? b : a));
      d.id = `${first.station}@${formatUtc(first.timeS)}`;
      this.n.fixes++;
    } else {
      this.n.revised++;
    }
    d.revision++;
    return { id: d.id, revision: d.revision, backfill, call };
  }

  /** The decided call or lone event a late event fits best (window, band and score of the matcher), or null. */
  private bestDecided(ev: StationEvent): Decided | null {
    const reach = this.matcher.reach(ev.station);
    let lo = 0;
    let hi = this.decided.length;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (this.decided[mid]!.timeS < ev.timeS - reach) lo = mid + 1;
      else hi = mid;
    }
    let best: Decided | null = null;
    let bestScore = Infinity;
    for (let k = lo; k < this.decided.length && this.decided[k]!.timeS <= ev.timeS + reach; k++) {
      const d = this.decided[k]!;
      if (d.events.some((m) => m.station === ev.station)) continue;
      if (!d.events.every((m) => Math.abs(ev.timeS - m.timeS) <= this.matcher.window(m.station, ev.station) && bandsOverlap(m, ev))) continue;
      const score = disagreement(d.events, ev, this.settings, this.matcher.window(d.events[0]!.station, ev.station));
      if (score !== null && score < bestScore) {
        best = d;
        bestScore = score;
      }
    }
    return best;
  }

  private attachLate(ev: StationEvent, d: Decided, st: StationState, nowS: number): LiveFix[] {
    const backfill = st.online === false || (st.returnedAtS !== null && ev.timeS <= st.returnedAtS && st.returnedAtS > nowS - this.live.backfillWindowS);
    if (backfill) this.n.backfilled++;
    else this.n.late++;
    if (d.events.length === 1) {
      // A lone event finds its partner: a new call.
      this.n.unmatched--;
      d.events = [...d.events, ev];
      d.timeS = Math.min(d.timeS, ev.timeS);
      const fix = this.publish(d, backfill);
      return fix === null ? [] : [fix];
    }
    if (!backfill && !this.live.revise) return [];
    d.events = [...d.events, ev];
    const fix = this.publish(d, backfill);
    return fix === null ? [] : [fix];
  }

  private forget(nowS: number): void {
    let drop = 0;
    while (drop < this.decided.length && this.decided[drop]!.timeS < nowS - this.live.backfillWindowS) drop++;
    drop = Math.max(drop, this.decided.length - this.live.maxHistory);
    if (drop > 0) this.decided.splice(0, drop);
  }
}

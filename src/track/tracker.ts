/**
 * The source tracker: follows several sources over time on the circle (or the sphere, when
 * candidates carry elevations, or the half-circle of a two-mic pair) and cuts each track's
 * activity into events. Pure and deterministic: one update() per hop, no clocks, no I/O; all
 * state lives in slots allocated once (maxTracks of them), so the steady state allocates
 * nothing per hop (event records and summaries are allocated when they are made).
 *
 * Per hop:
 * 1. predict every live track to the hop's time (angle-filter.ts);
 * 2. gate each candidate against each track by the Mahalanobis distance of its innovation;
 *    a candidate whose hop confidence x score is below minConfidence is ignored;
 * 3. assign candidates to confirmed tracks by global nearest neighbour (assignment.ts), then
 *    the leftovers to tentative tracks, and update the assigned tracks;
 * 4. a leftover candidate with hop confidence x score >= birthConfidence, outside every track's gate, starts a
 *    tentative track; it is confirmed (and gets the next track id) after confirmHits supported
 *    hops within confirmWindow hops, else dropped;
 * 5. confirmed tracks coast (prediction only, uncertainty growing to maxUncertaintyDeg) while
 *    unsupported and die after trackTimeoutS without support;
 * 6. the event cutter (event-cutter.ts) sees every live track every hop.
 *
 * Two sources closer than about gateSigma x bearingNoiseDeg look like one and share a track.
 */
import { RuntimeFailure } from '../errors.js';
import type { EventRecord } from '../records.js';
import { AngleFilterBank } from './angle-filter.js';
import { NearestNeighbourAssigner } from './assignment.js';
import { DirectionSums } from './direction-sums.js';
import { EventCutter, type HopLevels } from './event-cutter.js';
import { resolveTrackerOptions, type TrackerOptions, type TrackerSettings } from './options.js';
import type { HopObservation, TrackSummary, TrackUpdate } from './types.js';

const FREE = 0;
const TENTATIVE = 1;
const CONFIRMED = 2;

/** Score floor for the measurement variance bearingNoise^2 / score. */
const MIN_SCORE = 0.05;
/** Floor on cos(elevation) when widening the azimuth noise of high candidates. */
const MIN_COS_ELEVATION = 0.2;

const NO_EVENTS: readonly EventRecord[] = Object.freeze([]);

interface MutableUpdate {
  trackIds: (number | null)[];
  events: readonly EventRecord[];
}

export class Tracker {
  readonly options: Readonly<TrackerOptions>;
  private readonly size: number;
  private readonly nCand: number;
  private readonly az: AngleFilterBank;
  private readonly el: AngleFilterBank;
  private readonly state: Uint8Array;
  private readonly id: Int32Array;
  private readonly hasEl: Uint8Array;
  private readonly hits: Int32Array;
  private readonly age: Int32Array;
  private readonly lastSupportT: Float64Array;
  private readonly firstSeenT: Float64Array;
  private readonly hopCount: Float64Array;
  private readonly eventCount: Int32Array;
  private readonly activeS: Float64Array;
  private readonly chosen: Int32Array;
  private readonly lifetime: DirectionSums;
  private readonly cutter: EventCutter;
  private readonly assigner: NearestNeighbourAssigner;
  private readonly listed: Int32Array;
  private readonly listedChoice: Int32Array;
  private readonly cost: Float64Array;
  private readonly candAz: Float64Array;
  private readonly candEl: Float64Array;
  private readonly candScore: Float64Array;
  private readonly candR: Float64Array;
  private readonly candUsable: Uint8Array;
  private readonly candTaken: Uint8Array;
  private readonly candGated: Uint8Array;
  private readonly idsByLength: (number | null)[][] = [];
  private readonly hop: HopLevels = { timeS: 0, levelDbfs: 0, onset: 0, confidence: 0, bandLo: NaN, bandHi: NaN };
  private readonly result: MutableUpdate = { trackIds: [], events: NO_EVENTS };
  private readonly finished: TrackSummary[] = [];
  private readonly gate2: number;
  private nextId = 1;
  private lastT = NaN;
  private hopS = 0;
  private ended = false;

  constructor(options: TrackerSettings = {}) {
    const o = resolveTrackerOptions(options);
    this.options = Object.freeze(o);
    const n = o.maxTracks;
    const c = o.maxCandidates;
    this.size = n;
    this.nCand = c;
    const filter = {
      rateWanderDegS: o.rateWanderDegS,
      maxRateDegS: o.maxRateDegS,
      rateMemoryS: o.rateMemoryS,
      maxUncertaintyDeg: o.maxUncertaintyDeg,
    };
    this.az = new AngleFilterBank(n, o.mirroredPair ? 'half-circle' : 'circle', filter);
    this.el = new AngleFilterBank(n, 'elevation', filter);
    this.state = new Uint8Array(n);
    this.id = new Int32Array(n);
    this.hasEl = new Uint8Array(n);
    this.hits = new Int32Array(n);
    this.age = new Int32Array(n);
    this.lastSupportT = new Float64Array(n);
    this.firstSeenT = new Float64Array(n);
    this.hopCount = new Float64Array(n);
    this.eventCount = new Int32Array(n);
    this.activeS = new Float64Array(n);
    this.chosen = new Int32Array(n);
    this.lifetime = new DirectionSums(n, o.mirroredPair);
    this.cutter = new EventCutter(n, o);
    this.assigner = new NearestNeighbourAssigner(n, c);
    this.listed = new Int32Array(n);
    this.listedChoice = new Int32Array(n);
    this.cost = new Float64Array(n * c);
    this.candAz = new Float64Array(c);
    this.candEl = new Float64Array(c);
    this.candScore = new Float64Array(c);
    this.candR = new Float64Array(c);
    this.candUsable = new Uint8Array(c);
    this.candTaken = new Uint8Array(c);
    this.candGated = new Uint8Array(c);
    this.gate2 = o.gateSigma * o.gateSigma;
  }

  /** Feed one hop; see TrackUpdate (the returned object is reused by the next call). */
  update(obs: HopObservation): TrackUpdate {
    if (this.ended) throw new RuntimeFailure('tracker: update() after finish(); start a new Tracker for a new stream.');
    const t = obs.timeS;
    if (!Number.isFinite(t) || t <= this.lastT) {
      throw new RuntimeFailure(`tracker: hop time ${t} s does not follow ${this.lastT} s; hops must arrive in increasing time order.`);
    }
    const dt = this.lastT === this.lastT ? t - this.lastT : 0;
    if (dt > 0) this.hopS = dt;
    this.lastT = t;
    this.fillHop(obs);

    for (let s = 0; s < this.size; s++) {
      this.chosen[s] = -1;
      if (this.state[s] === FREE) continue;
      this.az.predict(s, dt);
      if (this.hasEl[s] === 1) this.el.predict(s, dt);
    }

    const nC = this.loadCandidates(obs);
    this.assignStage(CONFIRMED, nC);
    this.assignStage(TENTATIVE, nC);
    this.applyAssignments(t);
    this.births(t, nC);
    this.tentativeBookkeeping();

    let events: EventRecord[] | null = null;
    for (let s = 0; s < this.size; s++) {
      if (this.state[s] === FREE) continue;
      const j = this.chosen[s]!;
      const track = this.state[s] === CONFIRMED ? this.id[s]! : -1;
      const supported = j >= 0;
      const ended = this.cutter.step(
        s,
        this.hop,
        this.hopS,
        supported,
        supported ? this.candAz[j]! : NaN,
        supported ? this.candEl[j]! : NaN,
        supported ? this.candScore[j]! : 0,
        track,
      );
      if (ended !== null) events = this.collect(events, s, ended);
      if (this.state[s] === CONFIRMED && t - this.lastSupportT[s]! > this.options.trackTimeoutS) {
        const last = this.cutter.close(s, this.hopS, track);
        if (last !== null) events = this.collect(events, s, last);
        this.retire(s);
      }
    }

    const ids = this.idsFor(obs.candidates.length);
    for (let i = 0; i < ids.length; i++) ids[i] = null;
    for (let s = 0; s < this.size; s++) {
      const j = this.chosen[s]!;
      if (j >= 0 && this.state[s] === CONFIRMED) ids[j] = this.id[s]!;
    }
    this.result.trackIds = ids;
    this.result.events = events === null ? NO_EVENTS : events;
    return this.result;
  }

  /** End of stream: close every open event of a confirmed track and return those events. */
  finish(): EventRecord[] {
    if (this.ended) return [];
    this.ended = true;
    let events: EventRecord[] | null = null;
    for (let s = 0; s < this.size; s++) {
      if (this.state[s] !== CONFIRMED) continue;
      const ended = this.cutter.close(s, this.hopS, this.id[s]!);
      if (ended !== null) events = this.collect(events, s, ended);
    }
    return events ?? [];
  }

  /** One entry per confirmed track so far (dead and alive), by track id. */
  summary(): TrackSummary[] {
    const out = this.finished.slice();
    for (let s = 0; s < this.size; s++) if (this.state[s] === CONFIRMED) out.push(this.summarise(s, !this.ended));
    out.sort((a, b) => a.track - b.track);
    return out;
  }

  private fillHop(obs: HopObservation): void {
    const hop = this.hop;
    hop.timeS = obs.timeS;
    hop.levelDbfs = Number.isFinite(obs.levelDbfs) ? obs.levelDbfs : -Infinity;
    hop.onset = Number.isFinite(obs.onset) ? obs.onset : 0;
    hop.confidence = Number.isFinite(obs.confidence) ? obs.confidence : 0;
    const band = obs.bandHz;
    hop.bandLo = band ? band[0] : NaN;
    hop.bandHi = band ? band[1] : NaN;
  }

  /** Copy the usable candidates into the scratch arrays; returns how many are considered. */
  private loadCandidates(obs: HopObservation): number {
    const o = this.options;
    const nC = Math.min(obs.candidates.length, this.nCand);
    for (let j = 0; j < nC; j++) {
      const c = obs.candidates[j]!;
      const az = c.azimuthDeg;
      const el = c.elevationDeg;
      const usable =
        Number.isFinite(az) &&
        Number.isFinite(c.score) &&
        this.hop.confidence * c.score >= o.minConfidence &&
        (!o.mirroredPair || (az >= -90 && az <= 90)) &&
        (el === null || Number.isFinite(el));
      this.candUsable[j] = usable ? 1 : 0;
      this.candTaken[j] = 0;
      this.candGated[j] = 0;
      if (!usable) continue;
      const score = Math.min(1, Math.max(MIN_SCORE, c.score));
      this.candAz[j] = az;
      this.candEl[j] = el === null ? NaN : el;
      this.candScore[j] = c.score;
      this.candR[j] = (o.bearingNoiseDeg * o.bearingNoiseDeg) / score;
    }
    return nC;
  }

  /** Squared Mahalanobis distance of candidate j from slot s, and the gate it must pass. */
  private distance2(s: number, j: number): number {
    const r = this.candR[j]!;
    const el = this.candEl[j]!;
    if (this.hasEl[s] === 1 && el === el) {
      const cosEl = Math.max(MIN_COS_ELEVATION, Math.cos((this.el.angle[s]! * Math.PI) / 180));
      const rAz = r / (cosEl * cosEl);
      const nuAz = this.az.innovation(s, this.candAz[j]!);
      const nuEl = this.el.innovation(s, el);
      return (nuAz * nuAz) / this.az.innovationVar(s, rAz) + (nuEl * nuEl) / this.el.innovationVar(s, r);
    }
    const nu = this.az.innovation(s, this.candAz[j]!);
    return (nu * nu) / this.az.innovationVar(s, r);
  }

  private gateFor(s: number, j: number): number {
    return this.hasEl[s] === 1 && this.candEl[j] === this.candEl[j] ? 2 * this.gate2 : this.gate2;
  }

  /** Global nearest neighbour between the tracks in one state and the untaken candidates. */
  private assignStage(which: number, nC: number): void {
    let nT = 0;
    for (let s = 0; s < this.size; s++) if (this.state[s] === which) this.listed[nT++] = s;
    if (nT === 0 || nC === 0) return;
    const stride = this.nCand;
    let any = false;
    for (let i = 0; i < nT; i++) {
      const s = this.listed[i]!;
      for (let j = 0; j < nC; j++) {
        let k = Infinity;
        if (this.candUsable[j] === 1 && this.candTaken[j] === 0) {
          const d2 = this.distance2(s, j);
          const g = this.gateFor(s, j);
          if (d2 <= g) {
            k = d2 - g;
            this.candGated[j] = 1;
            any = true;
          }
        }
        this.cost[i * stride + j] = k;
      }
    }
    if (!any) return;
    this.assigner.solve(nT, nC, this.cost, this.listedChoice);
    for (let i = 0; i < nT; i++) {
      const j = this.listedChoice[i]!;
      if (j < 0) continue;
      this.chosen[this.listed[i]!] = j;
      this.candTaken[j] = 1;
    }
  }

  private applyAssignments(t: number): void {
    for (let s = 0; s < this.size; s++) {
      const j = this.chosen[s]!;
      if (j < 0) continue;
      const r = this.candR[j]!;
      const el = this.candEl[j]!;
      if (el === el) {
        if (this.hasEl[s] === 0) {
          this.hasEl[s] = 1;
          this.el.init(s, el, r, this.options.initialRateDegS);
        } else {
          this.el.update(s, el, r);
        }
        const cosEl = Math.max(MIN_COS_ELEVATION, Math.cos((this.el.angle[s]! * Math.PI) / 180));
        this.az.update(s, this.candAz[j]!, r / (cosEl * cosEl));
      } else {
        this.az.update(s, this.candAz[j]!, r);
      }
      this.support(s, j, t);
    }
  }

  private support(s: number, j: number, t: number): void {
    this.hits[s] = this.hits[s]! + 1;
    this.lastSupportT[s] = t;
    this.hopCount[s] = this.hopCount[s]! + 1;
    this.lifetime.add(s, this.candAz[j]!, this.candEl[j]!, Math.max(this.hop.confidence * this.candScore[j]!, 1e-6));
  }

  private births(t: number, nC: number): void {
    const o = this.options;
    for (let j = 0; j < nC; j++) {
      if (this.candUsable[j] === 0 || this.candTaken[j] === 1) continue;
      if (this.hop.confidence * this.candScore[j]! < o.birthConfidence) continue;
      if (this.candGated[j] === 1 || this.withinAnyGate(j)) continue;
      let s = 0;
      while (s < this.size && this.state[s] !== FREE) s++;
      if (s === this.size) return;
      this.state[s] = TENTATIVE;
      this.id[s] = -1;
      this.hits[s] = 0;
      this.age[s] = 0;
      this.hopCount[s] = 0;
      this.eventCount[s] = 0;
      this.activeS[s] = 0;
      this.firstSeenT[s] = t;
      this.lifetime.reset(s);
      this.cutter.reset(s);
      const r = this.candR[j]!;
      this.az.init(s, this.candAz[j]!, r, o.initialRateDegS);
      const el = this.candEl[j]!;
      this.hasEl[s] = el === el ? 1 : 0;
      if (el === el) this.el.init(s, el, r, o.initialRateDegS);
      this.chosen[s] = j;
      this.candTaken[j] = 1;
      this.support(s, j, t);
    }
  }

  /** A candidate inside the gate of a live track is that track's (a side peak), not a newcomer. */
  private withinAnyGate(j: number): boolean {
    for (let s = 0; s < this.size; s++) {
      if (this.state[s] !== FREE && this.distance2(s, j) <= this.gateFor(s, j)) return true;
    }
    return false;
  }

  private tentativeBookkeeping(): void {
    const o = this.options;
    for (let s = 0; s < this.size; s++) {
      if (this.state[s] !== TENTATIVE) continue;
      this.age[s] = this.age[s]! + 1;
      if (this.hits[s]! >= o.confirmHits) {
        this.state[s] = CONFIRMED;
        this.id[s] = this.nextId++;
      } else if (this.age[s]! >= o.confirmWindow) {
        this.state[s] = FREE;
        this.cutter.reset(s);
        this.chosen[s] = -1;
      }
    }
  }

  private collect(events: EventRecord[] | null, s: number, record: EventRecord): EventRecord[] {
    this.eventCount[s] = this.eventCount[s]! + 1;
    this.activeS[s] = this.activeS[s]! + (record.end_s - record.start_s);
    if (events === null) return [record];
    events.push(record);
    return events;
  }

  private retire(s: number): void {
    this.finished.push(this.summarise(s, false));
    this.state[s] = FREE;
    this.cutter.reset(s);
  }

  private summarise(s: number, alive: boolean): TrackSummary {
    return {
      track: this.id[s]!,
      events: this.eventCount[s]!,
      azimuthDeg: this.lifetime.meanAzimuthDeg(s),
      spreadDeg: this.lifetime.spreadDeg(s),
      elevationDeg: this.lifetime.meanElevationDeg(s),
      activeS: this.activeS[s]!,
      hops: this.hopCount[s]!,
      firstSeenS: this.firstSeenT[s]!,
      lastSeenS: this.lastSupportT[s]!,
      alive,
      mirror: this.options.mirroredPair ? 'front-back' : null,
    };
  }

  private idsFor(length: number): (number | null)[] {
    let ids = this.idsByLength[length];
    if (ids === undefined) {
      ids = new Array<number | null>(length).fill(null);
      this.idsByLength[length] = ids;
    }
    return ids;
  }
}

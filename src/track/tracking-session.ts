import type { AnalysisSetup, HopTime } from '../analysis/analysis.js';
import type { HopResult } from '../analysis/hop-analyzer.js';
import type { StreamChecks } from '../analysis/stream-checks.js';
import { AUDIO_TOP_HZ } from '../dsp/bands.js';
import { MAX_WATCHED } from '../analysis/watched-directions.js';
import { bearingOf, round, toFrameRecord, type FrameRecordSettings } from '../records/frame-record.js';
import type { EventRecord } from '../records/record-types.js';
import type { RecordSink, SinkResult } from '../sinks/record-sink.js';
import { ZENITH_DEG } from './event-cutter.js';
import { Tracker } from './tracker.js';
import type { TrackerOptions } from './options.js';
import type { DirectionCandidate, HopObservation, TrackSummary } from './types.js';

/**
 * A stream that wrote no event says why at its end when it had at least TOO_SHORT_WARN calls on
 * confirmed tracks dropped as shorter than --min-event, or CLEAR_HOPS_WARN hops of a confident
 * direction (CLEAR_CONFIDENCE): calls of a few milliseconds (bats) make no event with the defaults.
 */
const TOO_SHORT_WARN = 3;
const CLEAR_HOPS_WARN = 10;
const CLEAR_CONFIDENCE = 0.5;
/** ... and one of 96 kHz or more whose analysis stops in the audio band (at most 20 kHz) points to the ultrasound. */
const ULTRASOUND_RATE_HZ = 96000;

/** What the session needs to know about the analysis: the frame records' settings and the sources a hop can hold. */
export interface SessionSettings extends FrameRecordSettings {
  /** Most sources a hop hands on (the analysis's --max-sources): the tracker considers as many candidates. */
  maxSources?: number;
}

export interface SessionHooks {
  /** Told after each hop where the tracker wants the analysis to look next (HopAnalyzer.watch). */
  watch?: (azimuthDeg: Float64Array, elevationDeg: Float64Array, halfWidthDeg: Float64Array, count: number) => void;
  /** Window-edge and geometry checks over the stream (said once). */
  checks?: StreamChecks | null;
  /** Told each stream-check warning once (window edge, geometry), and why no event was written when that looks like short calls. */
  onWarning?: (message: string) => void;
  /** The stream's sample rate and the analysis' top frequency (--max-freq after its cap), Hz. */
  analysedHz?: { rate: number; top: number };
}

/**
 * Hop results -> tracker -> frame and event records into a sink. The glue between the analysis
 * core and the sinks, shared by scan, listen, the demo and accuracy. The tracker sees every
 * hop's candidates (with the hop's confidence) and assigns track ids; events come out when
 * they end. Frame records are made only when the sink wants them. Live records carry `utc`.
 */
export class TrackingSession {
  readonly tracker: Tracker;
  private readonly obs: HopObservation;
  private readonly candidates: DirectionCandidate[];
  private readonly band: [number, number] = [0, 0];
  private readonly pending: Promise<void>[] = [];
  private readonly checks: StreamChecks | null;
  private readonly watchAz = new Float64Array(MAX_WATCHED);
  private readonly watchEl = new Float64Array(MAX_WATCHED);
  private readonly watchHalf = new Float64Array(MAX_WATCHED);
  /** Wall-clock ms of stream time 0 of a live stream (for utc), null for files. */
  private epochMs: number | null = null;
  hops = 0;
  events = 0;
  /** Hops with a direction of at least CLEAR_CONFIDENCE. */
  private clearHops = 0;

  constructor(
    private readonly settings: SessionSettings,
    tracker: Partial<TrackerOptions>,
    private readonly sink: RecordSink,
    private readonly hooks: SessionHooks = {},
  ) {
    this.tracker = new Tracker({ ...tracker, mirror: settings.mirror, ...(settings.maxSources !== undefined ? { maxCandidates: settings.maxSources } : {}) });
    this.checks = hooks.checks ?? null;
    this.candidates = [];
    this.obs = { timeS: 0, levelDbfs: 0, snrDb: 0, onset: 0, confidence: 0, candidates: this.candidates, bandHz: null };
  }

  /** A session for an analysis (its mirror, pairs, sources per hop and stream checks) into `sink`. */
  static of(setup: AnalysisSetup, tracker: Partial<TrackerOptions>, sink: RecordSink, extra: { diagnostics?: boolean; viewerFields?: boolean; onWarning?: (message: string) => void } = {}): TrackingSession {
    const settings: SessionSettings = {
      headingDeg: setup.geometry.headingDeg,
      mirror: setup.model.mirror,
      pairs: setup.model.pairs,
      maxSources: setup.options.maxSources,
      diagnostics: extra.diagnostics ?? false,
      viewerFields: extra.viewerFields ?? false,
    };
    const analyzer = setup.analyzer;
    return new TrackingSession(settings, tracker, sink, { checks: setup.checks, onWarning: extra.onWarning, analysedHz: { rate: setup.analyzer.sampleRate, top: setup.options.maxFreqHz }, watch: (az, el, half, n) => analyzer.watch(az, el, half, n) });
  }

  /** The UTC of a stream time, when the stream is live. */
  utcAt(timeS: number): string | undefined {
    return this.epochMs === null ? undefined : new Date(this.epochMs + timeS * 1000).toISOString();
  }

  /** One hop at its stream time (default: the analyzer's). Returns a promise when a sink asks to wait. */
  hop(r: HopResult, time?: HopTime): SinkResult {
    this.hops++;
    const timeS = time?.timeS ?? r.timeS;
    if (time) this.epochMs = time.epochMs;
    if (this.checks) {
      const warning = this.checks.observe(r);
      // one warning line each (two checks may trip on the same hop)
      if (warning !== null) for (const line of warning.split('\n')) this.hooks.onWarning?.(line);
    }
    const cands = this.candidates;
    cands.length = 0;
    for (let i = 0; i < r.sourceCount; i++) cands.push(r.sources[i]!);
    const o = this.obs;
    o.timeS = timeS;
    o.levelDbfs = r.levelDbfs;
    o.snrDb = r.snrDb;
    o.onset = r.onset;
    o.confidence = r.confidence;
    if (r.valid && r.confidence >= CLEAR_CONFIDENCE) this.clearHops++;
    o.freshZ = r.freshZ;
    // The band range the delay stands for: from the lowest to the highest supporting band.
    if (r.supportFirstBand >= 0) {
      this.band[0] = Math.round(r.bands.loHz[r.supportFirstBand]!);
      this.band[1] = Math.round(r.bands.hiHz[r.supportLastBand]!);
      o.bandHz = this.band;
    } else o.bandHz = null;
    const upd = this.tracker.update(o);
    if (this.hooks.watch) this.hooks.watch(this.watchAz, this.watchEl, this.watchHalf, this.tracker.watchList(this.watchAz, this.watchEl, this.watchHalf));
    if (this.sink.wantsFrames) {
      const rec = toFrameRecord(r, this.settings, timeS);
      if (rec.sources) rec.sources.forEach((s, i) => (s.track = upd.trackIds[i] ?? null));
      rec.track = r.valid ? (upd.trackIds[0] ?? null) : null;
      const utc = this.utcAt(timeS);
      if (utc !== undefined) rec.utc = utc;
      this.push(this.sink.frame(rec));
    }
    for (const e of upd.events) this.emit(e);
    return this.drain();
  }

  /** End of stream: emit the events still open. */
  finish(): SinkResult {
    const warning = this.checks?.finish() ?? null;
    if (warning !== null) for (const line of warning.split('\n')) this.hooks.onWarning?.(line);
    for (const e of this.tracker.finish()) this.emit(e);
    const why = this.events === 0 ? this.whyNoEvent() : null;
    if (why !== null) this.hooks.onWarning?.(why);
    const overhead = this.tracker.overheadCount();
    if (overhead > 0) {
      this.hooks.onWarning?.(`${overhead} event${overhead === 1 ? ' was' : 's were'} read within ${90 - ZENITH_DEG} deg of straight overhead and left out: on a flat array they have no bearing, and wind buffeting every mic at once reads there`);
    }
    return this.drain();
  }

  /** Why a stream wrote no event, when that looks like calls too short or too high for the settings; null otherwise. */
  private whyNoEvent(): string | null {
    const short = this.tracker.tooShortCount();
    const minEventS = this.tracker.options.minEventS;
    if (short >= TOO_SHORT_WARN) {
      return `no event was written, but ${short} calls on confirmed tracks were shorter than --min-event (${minEventS} s) and dropped; for calls of a few milliseconds (bats) use --profile bats, or give a smaller --min-event`;
    }
    const hz = this.hooks.analysedHz;
    if (hz !== undefined && hz.rate >= ULTRASOUND_RATE_HZ && hz.top <= AUDIO_TOP_HZ) {
      return `no event was written; the analysis stops at ${hz.top / 1000} kHz (--max-freq) of this ${hz.rate / 1000} kHz recording: for ultrasonic callers (bats) use --profile bats`;
    }
    if (this.clearHops >= CLEAR_HOPS_WARN) {
      return `no event was written, but ${this.clearHops} hops had a confident direction: calls too short to confirm a track (--confirm-hits within --confirm-window hops) or to make an event (--min-event ${minEventS} s) are not reported; for calls of a few milliseconds (bats) use --profile bats`;
    }
    return null;
  }

  summary(): TrackSummary[] {
    return this.tracker.summary();
  }

  /** The stream-check warnings that apply (for --summary). */
  warnings(): string[] {
    return this.checks?.warnings() ?? [];
  }

  private emit(e: EventRecord): void {
    this.events++;
    const rec: EventRecord = {
      ...e,
      start_s: round(e.start_s, 4),
      end_s: round(e.end_s, 4),
      azimuth_deg: round(e.azimuth_deg, 2),
      spread_deg: round(e.spread_deg, 2),
      confidence: round(e.confidence, 3),
    };
    if (e.peak_dbfs !== undefined) rec.peak_dbfs = round(e.peak_dbfs, 1);
    if (e.start_azimuth_deg !== undefined) rec.start_azimuth_deg = round(e.start_azimuth_deg, 2);
    if (e.end_azimuth_deg !== undefined) rec.end_azimuth_deg = round(e.end_azimuth_deg, 2);
    if (e.rate_deg_s !== undefined) rec.rate_deg_s = round(e.rate_deg_s, 2);
    if (e.elevation_deg !== undefined && e.elevation_deg !== null) rec.elevation_deg = round(e.elevation_deg, 2);
    if (this.settings.headingDeg !== null) rec.bearing_deg = bearingOf(rec.azimuth_deg, this.settings.headingDeg);
    const utc = this.utcAt(rec.start_s);
    if (utc !== undefined) rec.utc = utc;
    this.push(this.sink.event(rec));
  }

  private push(p: SinkResult): void {
    if (p) this.pending.push(p);
  }

  private drain(): SinkResult {
    if (this.pending.length === 0) return undefined;
    const all = Promise.all(this.pending).then(() => undefined);
    this.pending.length = 0;
    return all;
  }
}

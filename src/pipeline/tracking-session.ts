import { Tracker } from '../track/tracker.js';
import type { HopObservation, TrackSummary } from '../track/types.js';
import type { TrackerOptions } from '../track/options.js';
import type { EventRecord, FrameRecord } from '../records.js';
import { bearingOf, round, toFrameRecord, type FrameRecordSettings } from './frame-record.js';
import type { HopResult } from './hop-analyzer.js';
import type { StreamChecks } from './stream-checks.js';

export interface SessionOutputs {
  /** Called for every hop's frame record (when frames are wanted). */
  onFrame?: (rec: FrameRecord) => void | Promise<void> | undefined;
  /** Called for every finished event. */
  onEvent?: (rec: EventRecord) => void | Promise<void> | undefined;
  /** For live streams: the UTC time of a stream time, ISO 8601. */
  utcAt?: (timeS: number) => string;
  /** Told each stream-check warning once (window edge, geometry). */
  onWarning?: (message: string) => void;
}

/**
 * Hop results -> tracker -> frame and event records. The glue between the analysis core and
 * the sinks, shared by scan, listen and the demo. The tracker sees every hop's candidates
 * (with the hop's confidence) and assigns track ids; events come out when they end.
 */
export class TrackingSession {
  readonly tracker: Tracker;
  private readonly obs: HopObservation;
  private readonly candidates: { azimuthDeg: number; elevationDeg: number | null; score: number }[];
  private readonly band: [number, number] = [0, 0];
  private readonly pending: Promise<void>[] = [];
  hops = 0;
  events = 0;

  constructor(
    private readonly settings: FrameRecordSettings,
    tracker: Partial<TrackerOptions>,
    private readonly outputs: SessionOutputs,
    private readonly checks: StreamChecks | null = null,
  ) {
    this.tracker = new Tracker({ ...tracker, mirror: settings.mirror });
    this.candidates = [];
    this.obs = { timeS: 0, levelDbfs: 0, snrDb: 0, onset: 0, confidence: 0, candidates: this.candidates, bandHz: null };
  }

  /** One hop. Returns a promise when a sink asks to wait. */
  hop(r: HopResult): Promise<void> | undefined {
    this.hops++;
    if (this.checks) {
      const warning = this.checks.observe(r);
      if (warning !== null) this.outputs.onWarning?.(warning);
    }
    const cands = this.candidates;
    cands.length = 0;
    for (let i = 0; i < r.sourceCount; i++) cands.push(r.sources[i]!);
    const o = this.obs;
    o.timeS = r.timeS;
    o.levelDbfs = r.levelDbfs;
    o.snrDb = r.snrDb;
    o.onset = r.onset;
    o.confidence = r.confidence;
    // The band range the delay stands for: from the lowest to the highest supporting band.
    if (r.supportFirstBand >= 0) {
      this.band[0] = Math.round(r.bands.loHz[r.supportFirstBand]!);
      this.band[1] = Math.round(r.bands.hiHz[r.supportLastBand]!);
      o.bandHz = this.band;
    } else o.bandHz = null;
    const upd = this.tracker.update(o);
    if (this.outputs.onFrame) {
      const rec = toFrameRecord(r, this.settings);
      if (rec.sources) rec.sources.forEach((s, i) => (s.track = upd.trackIds[i] ?? null));
      rec.track = r.valid ? (upd.trackIds[0] ?? null) : null;
      if (this.outputs.utcAt) rec.utc = this.outputs.utcAt(r.timeS);
      this.push(this.outputs.onFrame(rec));
    }
    for (const e of upd.events) this.emit(e);
    return this.drain();
  }

  /** End of stream: emit the events still open. */
  finish(): Promise<void> | undefined {
    const warning = this.checks?.finish() ?? null;
    if (warning !== null) this.outputs.onWarning?.(warning);
    for (const e of this.tracker.finish()) this.emit(e);
    return this.drain();
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
    if (this.outputs.utcAt) rec.utc = this.outputs.utcAt(rec.start_s);
    if (this.outputs.onEvent) this.push(this.outputs.onEvent(rec));
  }

  private push(p: void | Promise<void> | undefined): void {
    if (p) this.pending.push(p);
  }

  private drain(): Promise<void> | undefined {
    if (this.pending.length === 0) return undefined;
    const all = Promise.all(this.pending).then(() => undefined);
    this.pending.length = 0;
    return all;
  }
}

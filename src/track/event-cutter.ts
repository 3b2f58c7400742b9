/**
 * Cuts one track's activity into events (one record per call), one slot per track, state in
 * typed arrays; it reads the current hop from the shared HopScratch.
 *
 * Per hop a track is either supported (a candidate was assigned to it) or not. With
 * c = hop confidence x candidate score:
 * - an event starts on a supported hop with c >= eventEnterConfidence and either SNR >=
 *   eventEnterSnrDb, or onset >= onsetThreshold and SNR >= eventLeaveSnrDb (a sharp rise in a
 *   quiet call); the SNR is the hop's over the tracked noise floor, so what counts as a call
 *   does not change with the recorder's gain or a louder night;
 * - it continues over hops with c >= eventLeaveConfidence and SNR >= eventLeaveSnrDb
 *   (hysteresis: the leave thresholds sit below the enter thresholds);
 * - other hops are a pause; a pause up to maxGapS is bridged, a longer one ends the event at
 *   its last sustaining hop; an onset >= onsetThreshold during a pause of two hops or more,
 *   or on the hop that ends it, splits the event (a new call). A one-hop pause never splits:
 *   the onset strength belongs to the whole hop, so in a chorus it may come from another
 *   caller while this one merely dropped out for a hop; nor does a hop whose candidate for
 *   this track was heard only under a louder caller whose track took the hop's answer
 *   (onsetElsewhere: the onsets are that caller's). A caller heard under a louder, pulsing one
 *   (a crossing partner's calls, on one hop in two to four) had its calls cut by the louder
 *   caller's onsets into pieces shorter than minEventS, which were dropped (motion matrix draw
 *   555, crs01). Ten draws (sources >= 80 % complete summed / id switches / tracks holding two):
 *   893 / 45 / 13 -> 895 / 44 / 12, crossings 674 -> 683, held out 9999 80 -> 83; with the
 *   onsets of every hop whose answer another track took left out, also for a firm candidate and
 *   for an event's start, 897 / 45 / 12, but a caller starting beside a louder one, its first
 *   hop heard only as the louder one, no longer split its event (two callers calling in turn
 *   0.1 s apart on a pair, test/track/tracker.test.ts);
 * - events shorter than minEventS are dropped.
 * An event spans [first hop centre - hop/2, last sustaining hop centre + hop/2]; its azimuth
 * is the circular mean of its hops' azimuths weighted by c (linear mean of the folded azimuths
 * when the array's mirror flips azimuth, see direction-sums.ts), leaving out the hops that only
 * keep its track alive (`directionless`, from its second hop on: the analysis' memory of a call
 * that has ended, or a hop less sure than an event's start asks; the tracker does not move the
 * track with them either). Those trailed a call's end towards whatever sounded next: a passer's
 * call at -138 deg, overlapped by a chorus' at -80, came out at -130 (motion matrix draw 6060,
 * cho01). Motion matrix, ten draws (sources >= 80 % complete summed / id switches / tracks holding
 * two): 927 / 45 / 10 -> 927 / 40 / 10 (choruses' switches 17 -> 11; with the memory's hops alone
 * left out 926 / 39 / 10); held out 2718, 4040, 9999 as before (summed); accuracy matrix: events
 * per call 1.16 -> 1.15, calls matched by an event 93 -> 94 %, every direction column the same.
 * They still keep the event open and its end where the last of them lies;
 * spread_deg their circular standard deviation, confidence the mean c, peak_dbfs the loudest
 * hop level, band_hz the band of the loudest hop that named one. A straight line fitted to the
 * hops' azimuths over time (weighted least squares with the same weights, on the azimuth
 * unwrapped from the event's first hop, or on the folded azimuth of a mirrored array) gives
 * rate_deg_s, its slope, and start_azimuth_deg / end_azimuth_deg, the line at start_s and
 * end_s: where a moving caller's call began and ended (rate 0 and both equal to the mean for an
 * event of one hop; an event of fewer than SHORT_EVENT_HOPS hops takes its track's rate).
 *
 * Latency: an event is emitted at the first hop more than maxGapS after its last sustaining
 * hop, i.e. about maxGapS + hop/2 after the call ends (plus whatever delay the analysis
 * frames add before the hop reaches the tracker), or when its track dies or the stream ends.
 */
import type { EventRecord } from '../records/record-types.js';
import { wrapDeg } from './circular.js';
import { DirectionSums } from './direction-sums.js';
import { BAND_HI, BAND_LO, CONFIDENCE, HOP_S, LEVEL, MIN_WEIGHT, ONSET, SNR, TIME, type HopScratch } from './hop-scratch.js';
import type { TrackerOptions } from './options.js';

/** Shortest pause (hops) after which an onset splits an event. */
const MIN_SPLIT_PAUSE_HOPS = 2;
/** Sums per slot of the line fit. */
const LINE_SUMS = 5;
/** Below this spread of hop times (s^2) the line has no slope. */
const MIN_TIME_VARIANCE = 1e-9;
/**
 * An event of fewer hops than this reports its track's angular rate rather than the slope of a
 * line through its own hops (fitLine): over two or three hops that slope is the evidence
 * memory's lag and noise. A bat passing at 40 deg/s with 5 ms calls (test/accuracy/bats.test.ts,
 * numpy; the bats profile with the default 0.15 s memory): its events' own slopes -3.5 to 8.2
 * deg/s (median 2.5); the track's 39.1-40.5 from the sixth call on (0, 16, 26, 35, 38 over the
 * first five, as the track learns its rate). At 48 kHz an event of the default --min-event has 4
 * hops.
 */
const SHORT_EVENT_HOPS = 4;
/**
 * Directions more than this many degrees of elevation from the horizon (within 12 deg of straight
 * up or down) have no azimuth worth a bearing, and on a flat array (all mics in a horizontal
 * plane: its mirror is up-down) they are also where sound that reaches every mic at once reads:
 * the coherent part of wind buffeting. The tracker starts no track there (./tracker.ts), and on
 * a flat array an event whose mean elevation lies there is not written (close; overheadCount).
 * A chorus on a 10 cm triangle in wind at -48 dBFS (18 dB under the chorus): as its calls ended,
 * its memory faded into the wind's zero delays and the readings walked up to the zenith; a track
 * born at 65-77 deg then took the wind, and 45 s gave 39 events at 83-89 deg of elevation with
 * azimuths all round the circle beside the chorus' 25 (test/accuracy/overhead-wind.test.ts). A
 * caller 64 deg up keeps its events.
 */
export const ZENITH_DEG = 78;

export class EventCutter {
  /** Events of confirmed tracks dropped as shorter than minEventS (tooShortCount). */
  private tooShort = 0;
  /** Events of confirmed tracks left out as read straight overhead on a flat array (overheadCount). */
  private overhead = 0;
  private readonly active: Uint8Array;
  private readonly startT: Float64Array;
  private readonly lastT: Float64Array;
  private readonly pausedHops: Int32Array;
  private readonly pauseOnset: Float64Array;
  private readonly hops: Int32Array;
  /** Hops of the open event that set its direction (directionless ones left out, see above). */
  private readonly directionHops: Int32Array;
  private readonly sumConf: Float64Array;
  private readonly peak: Float64Array;
  private readonly peakBandLo: Float64Array;
  private readonly peakBandHi: Float64Array;
  private readonly peakBandLevel: Float64Array;
  private readonly sums: DirectionSums;
  /** Line fit of angle over time: reference angle, then sums of w, w t, w a, w t^2, w t a (t from the first hop). */
  private readonly lineRef: Float64Array;
  private readonly line: Float64Array;
  private readonly mirrored: boolean;
  /** A flat array (its mirror up-down): events straight overhead are left out (ZENITH_DEG). */
  private readonly flat: boolean;
  private readonly sideDeg: number;

  constructor(
    size: number,
    private readonly o: Readonly<TrackerOptions>,
    private readonly scratch: HopScratch,
    /** Per slot, its track's angular rate (deg/s; the tracker's filter, read at close: SHORT_EVENT_HOPS). */
    private readonly trackRate: Float64Array,
  ) {
    this.active = new Uint8Array(size);
    this.startT = new Float64Array(size);
    this.lastT = new Float64Array(size);
    this.pausedHops = new Int32Array(size);
    this.pauseOnset = new Float64Array(size);
    this.hops = new Int32Array(size);
    this.directionHops = new Int32Array(size);
    this.sumConf = new Float64Array(size);
    this.peak = new Float64Array(size);
    this.peakBandLo = new Float64Array(size);
    this.peakBandHi = new Float64Array(size);
    this.peakBandLevel = new Float64Array(size);
    this.sums = new DirectionSums(size, o.mirror, scratch);
    this.lineRef = new Float64Array(size);
    this.line = new Float64Array(size * LINE_SUMS);
    this.mirrored = o.mirror !== null && o.mirror.sideDeg !== null;
    this.flat = o.mirror?.kind === 'up-down';
    this.sideDeg = o.mirror?.sideDeg ?? 0;
  }

  /** Forget any open event of a slot. */
  reset(slot: number): void {
    this.active[slot] = 0;
  }

  /**
   * Feed the current hop to a slot; j is the candidate assigned to its track, or -1;
   * onsetElsewhere when j was heard only under a louder caller whose track took the hop's
   * answer (the hop's onset is that caller's, not this track's); directionless when j keeps its
   * track alive without moving it (it then leaves the event's direction out, see above). Returns
   * the event that ended, for track >= 0 (a tentative track, track < 0, has its events dropped),
   * else null.
   */
  step(slot: number, j: number, track: number, onsetElsewhere = false, directionless = false): EventRecord | null {
    const o = this.o;
    const sc = this.scratch;
    const hop = sc.hop;
    const snr = hop[SNR]!;
    const onset = hop[ONSET]!;
    const c = j >= 0 ? hop[CONFIDENCE]! * sc.candScore[j]! : 0;
    const sustains = j >= 0 && c >= o.eventLeaveConfidence && snr >= o.eventLeaveSnrDb;
    if (this.active[slot] === 0) {
      const enters = sustains && c >= o.eventEnterConfidence && (snr >= o.eventEnterSnrDb || onset >= o.onsetThreshold);
      if (enters) this.begin(slot, j);
      return null;
    }
    if (sustains) {
      if (!onsetElsewhere && this.pausedHops[slot]! >= MIN_SPLIT_PAUSE_HOPS && Math.max(onset, this.pauseOnset[slot]!) >= o.onsetThreshold) {
        const ended = this.close(slot, track);
        this.begin(slot, j);
        return ended;
      }
      this.accumulate(slot, j, directionless);
      return null;
    }
    this.pausedHops[slot] = this.pausedHops[slot]! + 1;
    if (onset > this.pauseOnset[slot]!) this.pauseOnset[slot] = onset;
    if (hop[TIME]! - this.lastT[slot]! > o.maxGapS) return this.close(slot, track);
    return null;
  }

  /** How many events of confirmed tracks were dropped as shorter than --min-event so far. */
  tooShortCount(): number {
    return this.tooShort;
  }

  /** How many events of confirmed tracks were left out so far as read within 90 - ZENITH_DEG of straight overhead on a flat array. */
  overheadCount(): number {
    return this.overhead;
  }

  /** End the slot's open event now (track death, end of stream); null when none or too short. */
  close(slot: number, track: number): EventRecord | null {
    if (this.active[slot] === 0) return null;
    this.active[slot] = 0;
    const hopS = this.scratch.hop[HOP_S]!;
    const start = Math.max(0, this.startT[slot]! - hopS / 2);
    const end = this.lastT[slot]! + hopS / 2;
    if (track < 0) return null;
    if (end - start < this.o.minEventS) {
      this.tooShort++;
      return null;
    }
    const elevation = this.sums.meanElevationDeg(slot);
    if (this.flat && elevation !== null && Math.abs(elevation) > ZENITH_DEG) {
      this.overhead++;
      return null;
    }
    const record: EventRecord = {
      start_s: start,
      end_s: end,
      azimuth_deg: this.sums.meanAzimuthDeg(slot),
      spread_deg: this.sums.spreadDeg(slot),
      confidence: this.sumConf[slot]! / this.hops[slot]!,
      track,
      peak_dbfs: this.peak[slot]!,
    };
    this.fitLine(slot, start, end, record);
    if (elevation !== null) record.elevation_deg = elevation;
    if (this.peakBandLo[slot] === this.peakBandLo[slot]) record.band_hz = [this.peakBandLo[slot]!, this.peakBandHi[slot]!];
    if (this.o.mirror !== null) record.mirror = this.o.mirror.kind;
    if (this.o.mirror?.axisDeg != null) record.mirror_axis_deg = Math.round(this.o.mirror.axisDeg * 100) / 100;
    return record;
  }

  /** Fill rate_deg_s, start_azimuth_deg and end_azimuth_deg from the line fit (its slope, or the track's rate for an event of fewer than SHORT_EVENT_HOPS hops). */
  private fitLine(slot: number, startS: number, endS: number, record: EventRecord): void {
    const b = slot * LINE_SUMS;
    const l = this.line;
    const w = l[b]!;
    const tm = l[b + 1]! / w;
    const am = l[b + 2]! / w;
    const varT = l[b + 3]! / w - tm * tm;
    const short = !this.mirrored && endS - startS < SHORT_EVENT_HOPS * this.scratch.hop[HOP_S]! - 1e-9;
    const rate = short ? this.trackRate[slot]! : varT > MIN_TIME_VARIANCE ? (l[b + 4]! / w - tm * am) / varT : 0;
    const t0 = this.startT[slot]!;
    const at = (t: number): number => {
      const a = am + rate * (t - t0 - tm);
      return this.mirrored ? wrapDeg(this.sideDeg + a) : wrapDeg(this.lineRef[slot]! + a);
    };
    record.start_azimuth_deg = at(startS);
    record.end_azimuth_deg = at(endS);
    record.rate_deg_s = rate;
  }

  private begin(slot: number, j: number): void {
    this.active[slot] = 1;
    this.lineRef[slot] = this.scratch.candAz[j]!;
    this.line.fill(0, slot * LINE_SUMS, (slot + 1) * LINE_SUMS);
    this.startT[slot] = this.scratch.hop[TIME]!;
    this.hops[slot] = 0;
    this.sumConf[slot] = 0;
    this.peak[slot] = -Infinity;
    this.peakBandLo[slot] = NaN;
    this.peakBandHi[slot] = NaN;
    this.peakBandLevel[slot] = -Infinity;
    this.sums.reset(slot);
    this.directionHops[slot] = 0;
    this.accumulate(slot, j, false);
  }

  private accumulate(slot: number, j: number, directionless: boolean): void {
    const sc = this.scratch;
    const hop = sc.hop;
    const level = hop[LEVEL]!;
    this.lastT[slot] = hop[TIME]!;
    this.pausedHops[slot] = 0;
    this.pauseOnset[slot] = 0;
    this.hops[slot] = this.hops[slot]! + 1;
    this.sumConf[slot] = this.sumConf[slot]! + hop[CONFIDENCE]! * sc.candScore[j]!;
    if (level > this.peak[slot]!) this.peak[slot] = level;
    if (directionless && this.directionHops[slot]! > 0) return;
    this.directionHops[slot] = this.directionHops[slot]! + 1;
    this.sums.add(slot, j);
    const w = Math.max(hop[CONFIDENCE]! * sc.candScore[j]!, MIN_WEIGHT);
    const t = hop[TIME]! - this.startT[slot]!;
    const a = this.mirrored ? sc.candAz[j]! : wrapDeg(sc.candAz[j]! - this.lineRef[slot]!);
    const l = this.line;
    const b = slot * LINE_SUMS;
    l[b] = l[b]! + w;
    l[b + 1] = l[b + 1]! + w * t;
    l[b + 2] = l[b + 2]! + w * a;
    l[b + 3] = l[b + 3]! + w * t * t;
    l[b + 4] = l[b + 4]! + w * t * a;
    // The event's band: that of its loudest hop that named one.
    const lo = hop[BAND_LO]!;
    if (lo === lo && level > this.peakBandLevel[slot]!) {
      this.peakBandLevel[slot] = level;
      this.peakBandLo[slot] = lo;
      this.peakBandHi[slot] = hop[BAND_HI]!;
    }
  }
}

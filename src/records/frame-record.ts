import { wrap360 } from '../geometry/vec3.js';
import type { FrameRecord, SourceEstimate } from './record-types.js';
import type { MicPair } from '../geometry/array-geometry.js';
import type { ArrayMirror } from '../geometry/array-mirror.js';

import type { HopResult } from '../analysis/hop-analyzer.js';

/** What a frame record carries beyond the fields of interface.md. */
export interface FrameRecordSettings {
  headingDeg: number | null;
  /** The array's mirror (src/geometry/array-mirror.ts), null for a solid array. */
  mirror: ArrayMirror | null;
  pairs: readonly MicPair[];
  /** Per-pair diagnostics (tdoa, peak height, band agreement). */
  diagnostics: boolean;
  /** Per-channel levels and the band vote, for the viewer. */
  viewerFields: boolean;
}

export const round = (x: number, digits: number): number => {
  const f = 10 ** digits;
  return Math.round(x * f) / f;
};

/** Compass bearing 0..360 of an azimuth for an array heading (interface.md). */
export function bearingOf(azimuthDeg: number, headingDeg: number): number {
  return round(wrap360(azimuthDeg + headingDeg), 2);
}

const sig = (x: number): number | null => (Number.isFinite(x) ? Number(x.toPrecision(7)) : null);

/** Turn a hop's result into the frame record of interface.md; `timeS` is its stream time (a live stream's, which keeps step with the wall clock). */
export function toFrameRecord(r: HopResult, s: FrameRecordSettings, timeS: number = r.timeS): FrameRecord {
  const top = r.valid ? r.sources[0]! : null;
  const rec: FrameRecord = {
    time_s: round(timeS, 4),
    azimuth_deg: top ? round(top.azimuthDeg, 2) : null,
    elevation_deg: top && top.elevationDeg !== null ? round(top.elevationDeg, 2) : null,
    confidence: round(r.confidence, 3),
    tdoa_s: Array.from(r.tdoaS, (t) => (r.valid ? sig(t) : null)),
    level_dbfs: round(Math.max(-200, r.levelDbfs), 1),
    snr_db: round(r.snrDb, 1),
    onset: round(r.onset, 3),
    mirror: s.mirror?.kind ?? null,
  };
  if (s.mirror?.axisDeg != null) rec.mirror_axis_deg = round(s.mirror.axisDeg, 2);
  if (s.headingDeg !== null) rec.bearing_deg = top ? bearingOf(top.azimuthDeg, s.headingDeg) : null;
  if (r.valid) {
    const sources: SourceEstimate[] = [];
    for (let i = 0; i < r.sourceCount; i++) {
      const src = r.sources[i]!;
      const e: SourceEstimate = {
        azimuth_deg: round(src.azimuthDeg, 2),
        elevation_deg: src.elevationDeg === null ? null : round(src.elevationDeg, 2),
        score: round(src.score, 3),
      };
      if (s.headingDeg !== null) e.bearing_deg = bearingOf(src.azimuthDeg, s.headingDeg);
      if (src.aliasOf >= 0) e.alias_of = src.aliasOf;
      sources.push(e);
    }
    rec.sources = sources;
  } else {
    rec.sources = [];
  }
  if (s.diagnostics) {
    rec.pairs = s.pairs.map((pair, p) => ({
      pair: [pair[0], pair[1]],
      tdoa_s: r.valid ? sig(r.tdoaS[p]!) : null,
      peak: round(r.pairPeak[p]!, 3),
      band_agreement: round(r.pairAgreement[p]!, 3),
    }));
  }
  if (s.viewerFields) {
    rec.levels_dbfs = Array.from(r.channelLevelsDbfs, (l) => round(Math.max(-200, l), 1));
    rec.band_votes = Array.from(r.bandVoteWeight, (w, b) => ({
      lo_hz: Math.round(r.bands.loHz[b]!),
      hi_hz: Math.round(r.bands.hiHz[b]!),
      weight: round(w, 3),
      tdoa_s: sig(r.bandVoteTdoaS[b]!),
    }));
  }
  return rec;
}


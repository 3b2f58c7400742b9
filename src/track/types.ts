/** Types at the border of the tracker: what the analysis core feeds in, what comes out. */
import type { MirrorKind } from '../geometry/array-mirror.js';
import type { EventRecord } from '../records/record-types.js';

/** One direction candidate of a hop, best first in HopObservation.candidates. */
export interface DirectionCandidate {
  azimuthDeg: number;
  elevationDeg: number | null;
  score: number;
  /** Centre frequency of what the candidate heard, Hz (NaN or absent when unknown): keeps callers in different bands on different tracks. */
  centreHz?: number;
  /**
   * True for a caller heard only under a louder one (the analysis' HopResult sources): it keeps a
   * confirmed track alive and its event open, but neither moves, starts nor confirms a track, nor
   * gives it its first elevation.
   */
  underLouder?: boolean;
  /**
   * The index (in HopObservation.candidates) of the candidate this one is an aliased lobe of (the
   * same sound, heard where a track's prediction says its caller is), absent or -1 for none: it
   * stands in for that candidate only when no confirmed track explains that one.
   */
  aliasOf?: number;
}

/** What the analysis core hands the tracker once per hop. */
export interface HopObservation {
  timeS: number;        // centre of the hop's analysis frame, seconds from stream start
  levelDbfs: number;    // frame level, dBFS
  snrDb: number;        // SNR over the noise floor, dB (the hop's best band)
  onset: number;        // onset strength in [0, 1]: high where energy rises sharply
  confidence: number;   // [0, 1]
  candidates: readonly DirectionCandidate[]; // best first; may be empty
  bandHz?: readonly [number, number] | null; // dominant frequency band of the hop
  freshZ?: number;      // the hop's own coherence with its answer, in standard deviations of noise's (absent: unknown)
}

/**
 * The tracker's answer to one hop. The object and its arrays are reused by the next
 * update() call (no allocation per hop): copy what you keep.
 */
export interface TrackUpdate {
  /** Per candidate of the hop, in its order: the confirmed track it was assigned to, else null. */
  trackIds: readonly (number | null)[];
  /** Events that ended at this hop (usually none). */
  events: readonly EventRecord[];
}

/** What the tracker learned about one confirmed track over the whole stream. */
export interface TrackSummary {
  track: number;
  /** Events emitted for this track. */
  events: number;
  /** Weighted circular mean azimuth of every hop assigned to the track, degrees. */
  azimuthDeg: number;
  /** Circular standard deviation of those azimuths, degrees (linear on the folded azimuths of a mirrored array). */
  spreadDeg: number;
  /** Weighted mean elevation, degrees, when the candidates carried elevations. */
  elevationDeg: number | null;
  /** Sum of the durations of the track's events, seconds. */
  activeS: number;
  /** Hops assigned to the track. */
  hops: number;
  firstSeenS: number;
  lastSeenS: number;
  /** The track had not timed out when the summary was taken (false for every track after finish()). */
  alive: boolean;
  /** The array's mirror (src/geometry/array-mirror.ts), and for one that flips azimuth its axis: a reads as 2 axis - a. */
  mirror: MirrorKind | null;
  mirrorAxisDeg: number | null;
}

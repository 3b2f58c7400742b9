/**
 * The records bearline writes (JSON Lines, CSV, WebSocket, MQTT). Field names are the
 * outside contract of ../shared/interface.md: snake_case, angles in degrees, times in seconds
 * from the start of the stream.
 */
import type { MirrorKind } from '../geometry/array-mirror.js';

/** One direction candidate of a hop (the strongest is repeated in the frame's top-level fields). */
export interface SourceEstimate {
  azimuth_deg: number;
  elevation_deg: number | null;
  /** Compass bearing (azimuth + heading), only when the geometry gives a heading. */
  bearing_deg?: number;
  /** Relative peak score in [0, 1]. */
  score: number;
  /** Track id once the tracker has assigned this candidate, else null. */
  track?: number | null;
  /**
   * Only on a source that is an aliased lobe of another (the same sound, where a tracked
   * caller should be and which the array cannot tell from the other): that source's index.
   */
  alias_of?: number;
}

/** Per-pair diagnostics (behind a flag). */
export interface PairDiagnostics {
  pair: [number, number];
  tdoa_s: number | null;
  peak: number;
  band_agreement: number;
}

/** One frequency band's vote in a hop (band voting): its range, its weight, and the delay it votes for. */
export interface BandVote {
  lo_hz: number;
  hi_hz: number;
  weight: number;
  /** The delay this band votes for (first pair), or null when the band has no usable peak. */
  tdoa_s: number | null;
}

export interface FrameRecord {
  time_s: number;
  utc?: string;
  azimuth_deg: number | null;
  elevation_deg: number | null;
  bearing_deg?: number | null;
  confidence: number;
  /** One entry per mic pair, ordered (0,1), (0,2), ... (1,2), ...; null where a pair has no estimate. */
  tdoa_s: (number | null)[];
  level_dbfs: number;
  /** SNR of the hop over the tracked noise floor, dB (its best band; 0 at the floor). */
  snr_db?: number;
  /** Level of each channel, dBFS, in channel order (for level meters). */
  levels_dbfs?: number[];
  /** The band votes of this hop (for the viewer's band chart). */
  band_votes?: BandVote[];
  /** Which mirror ambiguity the estimate carries (src/geometry/array-mirror.ts): the component the mirror flips most. */
  mirror?: MirrorKind | null;
  /** For a mirror that flips azimuth (a line, an upright planar array): azimuth a reads the same as 2 x this - a. */
  mirror_axis_deg?: number;
  /** Onset strength of the hop in [0, 1]. */
  onset?: number;
  sources?: SourceEstimate[];
  track?: number | null;
  pairs?: PairDiagnostics[];
}

export interface EventRecord {
  start_s: number;
  end_s: number;
  utc?: string;
  azimuth_deg: number;
  elevation_deg?: number | null;
  bearing_deg?: number | null;
  /** Circular standard deviation of the hop azimuths, degrees. */
  spread_deg: number;
  confidence: number;
  track: number;
  peak_dbfs?: number;
  /** Dominant frequency band of the event, Hz. */
  band_hz?: [number, number];
  /** Azimuth at start_s and at end_s of a straight line fitted to the event's hop azimuths over time, degrees. */
  start_azimuth_deg?: number;
  end_azimuth_deg?: number;
  /** Slope of that line: the caller's angular rate, deg/s (positive = clockwise seen from above, towards +azimuth). */
  rate_deg_s?: number;
  mirror?: MirrorKind | null;
  mirror_axis_deg?: number;
  station?: string;
}

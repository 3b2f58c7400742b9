/**
 * Every user-settable number of `bearline locate`, with its default and its check.
 * The command line maps its flags onto this one object; the core takes only this.
 */
import { UsageError } from '../util/errors.js';
import { DEFAULT_SPEED_OF_SOUND } from '../geometry/sound-speed.js';

export interface LocateOptions {
  /** Speed of sound, m/s. */
  speedOfSound: number;
  /** One-sigma bearing uncertainty (degrees) for stations that give none. */
  bearingSdDeg: number;
  /** One-sigma uncertainty of each station's surveyed position, metres. */
  positionSdM: number;
  /** One-sigma uncertainty of an event's onset time (seconds): weights arrival-time differences. */
  onsetSdS: number;
  /** Residual clock uncertainty (seconds) of stations without synchronised clocks, after clock_offset_s. */
  clockUncertaintyS: number;
  /** Residual clock uncertainty (seconds) of stations with synchronised clocks (clock_synced). */
  syncedClockUncertaintyS: number;
  /** Extra slack (seconds) in the window within which events at two stations count as one call. */
  matchSlackS: number;
  /** Smallest crossing angle (degrees) between bearing lines for a fix; below it the geometry is poor. */
  minCrossingDeg: number;
  /** A bearing whose miss distance exceeds this many sigmas is an outlier. */
  outlierSigma: number;
  /** Probability content of the reported error ellipse, in (0, 1). */
  ellipseLevel: number;
  /** Use arrival-time differences between stations with synchronised clocks. */
  useTimeDifferences: boolean;
  /** Report matched calls that gave no fix (GeoJSON geometry null, CSV empty position). */
  includeUnfixed: boolean;
}

export const DEFAULT_LOCATE_OPTIONS: Readonly<LocateOptions> = Object.freeze({
  speedOfSound: DEFAULT_SPEED_OF_SOUND,
  bearingSdDeg: 5,
  positionSdM: 1,
  onsetSdS: 0.005,
  clockUncertaintyS: 0.5,
  syncedClockUncertaintyS: 0.001,
  matchSlackS: 0.05,
  minCrossingDeg: 15,
  outlierSigma: 3,
  ellipseLevel: 0.95,
  useTimeDifferences: true,
  includeUnfixed: false,
});

/** The flag that sets each option, for messages. */
export const LOCATE_OPTION_FLAGS: Readonly<Record<keyof LocateOptions, string>> = Object.freeze({
  speedOfSound: '--speed-of-sound',
  bearingSdDeg: '--bearing-sd',
  positionSdM: '--position-sd',
  onsetSdS: '--onset-sd',
  clockUncertaintyS: '--clock-uncertainty',
  syncedClockUncertaintyS: '--synced-clock-uncertainty',
  matchSlackS: '--match-slack',
  minCrossingDeg: '--min-crossing',
  outlierSigma: '--outlier-sigma',
  ellipseLevel: '--ellipse-level',
  useTimeDifferences: '--no-time-differences',
  includeUnfixed: '--include-unfixed',
});

type NumericKey = { [K in keyof LocateOptions]: LocateOptions[K] extends number ? K : never }[keyof LocateOptions];

const RANGES: Readonly<Record<NumericKey, readonly [number, number, string]>> = {
  speedOfSound: [200, 2000, 'm/s'],
  bearingSdDeg: [0.01, 90, 'degrees'],
  positionSdM: [0, 1000, 'metres'],
  onsetSdS: [1e-6, 10, 'seconds'],
  clockUncertaintyS: [0, 3600, 'seconds'],
  syncedClockUncertaintyS: [0, 10, 'seconds'],
  matchSlackS: [0, 3600, 'seconds'],
  minCrossingDeg: [0, 89, 'degrees'],
  outlierSigma: [1, 100, 'sigmas'],
  ellipseLevel: [0.01, 0.9999, '(a probability)'],
};

/** Fill in defaults and check every value; a bad value is a UsageError naming its flag. */
export function resolveLocateOptions(partial: Partial<LocateOptions> = {}): LocateOptions {
  const o: LocateOptions = { ...DEFAULT_LOCATE_OPTIONS, ...partial };
  for (const key of Object.keys(RANGES) as NumericKey[]) {
    const [lo, hi, unit] = RANGES[key];
    const v = o[key];
    if (!Number.isFinite(v) || v < lo || v > hi) {
      throw new UsageError(`${LOCATE_OPTION_FLAGS[key]} ${v} is out of range: give a value from ${lo} to ${hi} ${unit}`);
    }
  }
  return o;
}

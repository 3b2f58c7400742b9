/**
 * Every user-settable number of `bearline locate`, with its default and its check.
 * The command line maps its flags onto this one object; the core takes only this.
 */
import { UsageError } from '../util/errors.js';
import { DEFAULT_SPEED_OF_SOUND } from '../geometry/sound-speed.js';
import { flagOption, numberOption, resolveWithSpecs, type OptionSpec } from '../options/option-spec.js';

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

const D = DEFAULT_LOCATE_OPTIONS;

/** The user's locate options (the speed of sound comes from --speed-of-sound or --temperature, like every command's). */
export const locateOptionSpecs: readonly OptionSpec<keyof LocateOptions>[] = [
  numberOption('bearingSdDeg', 'bearing-sd', 'deg', D.bearingSdDeg, { min: 0.01, max: 90, unit: 'deg' }, 'bearing uncertainty (one sigma) for stations without bearing_sd_deg'),
  numberOption('positionSdM', 'position-sd', 'm', D.positionSdM, { min: 0, max: 1000, unit: 'm' }, 'uncertainty (one sigma) of each station position'),
  numberOption('onsetSdS', 'onset-sd', 's', D.onsetSdS, { min: 1e-6, max: 10, unit: 's' }, 'uncertainty (one sigma) of an event onset time, for arrival-time differences'),
  numberOption('clockUncertaintyS', 'clock-uncertainty', 's', D.clockUncertaintyS, { min: 0, max: 3600, unit: 's' }, 'clock uncertainty of unsynchronised stations after clock_offset_s (widens matching)'),
  numberOption('syncedClockUncertaintyS', 'synced-clock-uncertainty', 's', D.syncedClockUncertaintyS, { min: 0, max: 10, unit: 's' }, 'clock uncertainty of stations with clock_synced'),
  numberOption('matchSlackS', 'match-slack', 's', D.matchSlackS, { min: 0, max: 3600, unit: 's' }, 'extra time allowed when matching events across stations'),
  numberOption('minCrossingDeg', 'min-crossing', 'deg', D.minCrossingDeg, { min: 0, max: 89, unit: 'deg' }, 'smallest crossing angle of bearing lines for a fix (poorer geometry is flagged)'),
  numberOption('outlierSigma', 'outlier-sigma', 'n', D.outlierSigma, { min: 1, max: 100, unit: 'sigmas' }, 'a bearing missing the fix by more sigmas than this is an outlier (and an event missing a call by more does not join it)'),
  numberOption('ellipseLevel', 'ellipse-level', 'p', D.ellipseLevel, { min: 0.01, max: 0.9999 }, 'probability inside the reported error ellipse'),
  flagOption('useTimeDifferences', 'no-time-differences', D.useTimeDifferences, 'do not use arrival-time differences between synchronised stations'),
  flagOption('includeUnfixed', 'include-unfixed', D.includeUnfixed, 'also report matched calls that gave no fix (GeoJSON geometry null)'),
];

/** Fill in defaults and check every value; a bad value is a UsageError naming its flag. */
export function resolveLocateOptions(partial: Partial<LocateOptions> = {}): LocateOptions {
  const o = resolveWithSpecs<LocateOptions>(locateOptionSpecs, partial, 'locate', ['speedOfSound']);
  const c = o.speedOfSound ?? DEFAULT_SPEED_OF_SOUND;
  if (!(Number.isFinite(c) && c >= 200 && c <= 2000)) throw new UsageError(`--speed-of-sound ${c} is out of range: give a value from 200 to 2000 m/s`);
  return { ...o, speedOfSound: c };
}

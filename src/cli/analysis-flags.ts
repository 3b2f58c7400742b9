import type { Command } from 'commander';
import { analysisOptionSpecs, type AnalysisOptions } from '../analysis/analysis-options.js';
import { textOption, type OptionSpec } from '../options/option-spec.js';
import { loadProfile, profileValues, type ProfileSections, type RunProfile } from '../options/profile.js';
import { mqttOptionSpecs } from '../sinks/mqtt-options.js';
import { recordLogOptionSpecs } from '../sinks/record-log-options.js';
import { stationOptionSpecs } from '../station/runtime-options.js';
import { resolveTrackerOptions, trackerOptionSpecs, type TrackerOptions } from '../track/options.js';
import { arrayOptionSpecs, configsDir, type ArrayOptionValues } from './geometry-option.js';
import { addOptions, givenOptions, readOptions } from './options.js';

/** The sections a run profile may hold, each read through its stage's option specs. */
export const PROFILE_SECTIONS: ProfileSections = {
  analysis: analysisOptionSpecs,
  tracker: trackerOptionSpecs,
  station: stationOptionSpecs,
  log: recordLogOptionSpecs,
  mqtt: mqttOptionSpecs,
};

const PROFILE_SPEC = textOption(
  'profile',
  'profile',
  'name|file.json',
  null,
  'run profile: settings per stage (presets in configs/profiles/: frog-chorus, passing-birds, bats, bench, station-low-cpu)',
  { defaultText: 'none' },
);

/** Options every analysing command shares (scan, listen, demo, accuracy): array, profile, analysis, tracker. */
export function addAnalysisOptions(cmd: Command): Command {
  return addOptions(cmd, [...arrayOptionSpecs, PROFILE_SPEC, ...analysisOptionSpecs, ...trackerOptionSpecs]);
}

export interface StageSettings {
  array: ArrayOptionValues;
  analysis: AnalysisOptions;
  tracker: Partial<TrackerOptions>;
  /** The profile read (null without --profile), for the other stages' sections. */
  profile: RunProfile | null;
}

/** A stage's settings: the profile section's, with the options given on the command line laid over them. */
export function sectionSettings<T>(cmd: Command, specs: readonly OptionSpec[], profile: RunProfile | null, section: string): Partial<T> {
  return { ...profileValues<T>(profile, section), ...givenOptions<T>(cmd, specs) };
}

/**
 * The array, analysis and tracker settings of an analysing command. The whole profile is read
 * and checked here (every section, against the specs), and the tracker settings in full (pairs
 * such as --confirm-hits against --confirm-window), so that a bad one stops the command before
 * any input is read or output opened; the analysis settings need the sample rate and are
 * checked in full by resolveAnalysisOptions (each value is already checked against its spec).
 */
export function resolveStageSettings(cmd: Command): StageSettings {
  const profileName = readOptions<{ profile: string | null }>(cmd, [PROFILE_SPEC]).profile;
  const profile = profileName === null ? null : loadProfile(profileName, `${configsDir()}profiles/`, PROFILE_SECTIONS);
  const tracker = sectionSettings<TrackerOptions>(cmd, trackerOptionSpecs, profile, 'tracker');
  resolveTrackerOptions(tracker, profile ? `profile ${profile.path} and the command line` : 'tracker');
  return {
    array: givenOptions<ArrayOptionValues>(cmd, arrayOptionSpecs),
    analysis: sectionSettings<AnalysisOptions>(cmd, analysisOptionSpecs, profile, 'analysis'),
    tracker,
    profile,
  };
}

import type { Command } from 'commander';
import { analysisOptionSpecs, type AnalysisOptions } from '../analysis/analysis-options.js';
import { loadProfile, profileSection, type RunProfile } from '../options/profile.js';
import { resolveTrackerOptions, type TrackerOptions } from '../track/options.js';
import { configsDir } from './geometry-option.js';
import { addArrayOptions, addSpecs, pickSpecs, trackerCliSpecs } from './options.js';

/** Options every analysing command shares (scan, listen, demo): array, profile, analysis, tracker. */
export function addAnalysisOptions(cmd: Command): Command {
  addArrayOptions(cmd);
  cmd.option('--profile <name|file.json>', 'run profile: settings per stage (presets in configs/profiles/: frog-chorus, passing-birds, bench, station-low-cpu)');
  addSpecs(cmd, analysisOptionSpecs);
  addSpecs(cmd, trackerCliSpecs());
  return cmd;
}

/**
 * Analysis and tracker settings: the profile's (read through the same specs as the flags),
 * overridden by the flags given. The loaded profile is returned for the other stages' sections.
 * The tracker settings are checked here in full (ranges and pairs such as --confirm-hits against
 * --confirm-window), so that a bad one stops the command before any output is opened; the
 * analysis settings need the sample rate and are checked by resolveAnalysisOptions.
 */
export function resolveStageSettings(
  raw: Record<string, unknown>,
  profileName: string | undefined,
): { analysis: AnalysisOptions; tracker: Partial<TrackerOptions>; profile: RunProfile | null } {
  const profile = profileName ? loadProfile(profileName, `${configsDir()}profiles/`).profile : null;
  const analysis: AnalysisOptions = {
    ...profileSection<AnalysisOptions>(analysisOptionSpecs, profile?.analysis, 'analysis'),
    ...pickSpecs<AnalysisOptions>(raw, analysisOptionSpecs),
  };
  const trackerSpecs = trackerCliSpecs();
  const tracker: Partial<TrackerOptions> = {
    ...profileSection<TrackerOptions>(trackerSpecs, profile?.tracker, 'tracker'),
    ...pickSpecs<Partial<TrackerOptions>>(raw, trackerSpecs),
  };
  resolveTrackerOptions(tracker);
  return { analysis, tracker, profile };
}

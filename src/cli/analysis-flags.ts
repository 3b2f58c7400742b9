import type { Command } from 'commander';
import { UsageError } from '../errors.js';
import { analysisOptionSpecs, type AnalysisOptions } from '../pipeline/analysis-options.js';
import { loadProfile, profileSection } from '../pipeline/profile.js';
import type { TrackerOptions } from '../track/options.js';
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

/** Analysis and tracker settings: the profile's, overridden by the flags given. */
export function resolveStageSettings(raw: Record<string, unknown>, profileName: string | undefined): { analysis: AnalysisOptions; tracker: Partial<TrackerOptions> } {
  const loaded = profileName ? loadProfile(profileName, `${configsDir()}profiles/`) : null;
  const profile = loaded?.profile ?? null;
  const where = loaded?.where ?? '';
  const analysis = {
    ...profileSection(profile, 'analysis', analysisOptionSpecs.map((s) => s.key), where),
    ...pickSpecs<AnalysisOptions>(raw, analysisOptionSpecs),
  } as AnalysisOptions;
  const trackerSpecs = trackerCliSpecs();
  const tracker = {
    ...profileSection(profile, 'tracker', trackerSpecs.map((s) => s.key), where),
    ...pickSpecs<Partial<TrackerOptions>>(raw, trackerSpecs),
  } as Partial<TrackerOptions>;
  for (const [k, v] of Object.entries(analysis)) {
    if (k !== 'voting' && typeof v !== 'number') throw new UsageError(`${where}: "analysis.${k}" must be a number`);
  }
  return { analysis, tracker };
}


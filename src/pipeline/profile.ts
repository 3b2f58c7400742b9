import { existsSync } from 'node:fs';
import { readJsonFile } from '../io/read-json-file.js';
import { UsageError } from '../errors.js';

/**
 * A run profile (configs/profiles/*.json): settings per stage under the stage's key
 * ("analysis", "tracker", ...), with the same keys as the stage's options object. Values
 * given on the command line win over the profile's.
 */
export interface RunProfile {
  about?: string;
  analysis?: Record<string, unknown>;
  tracker?: Record<string, unknown>;
  [stage: string]: unknown;
}

export function loadProfile(nameOrPath: string, profilesDir: string): { profile: RunProfile; where: string } {
  const preset = `${profilesDir}${nameOrPath}.json`;
  const path = !existsSync(nameOrPath) && /^[\w.-]+$/.test(nameOrPath) && existsSync(preset) ? preset : nameOrPath;
  if (!existsSync(path)) {
    throw new UsageError(`--profile ${nameOrPath}: no such profile file or preset (presets are in ${profilesDir})`);
  }
  const json = readJsonFile(path, 'profile', '--profile');
  if (typeof json !== 'object' || json === null || Array.isArray(json)) throw new UsageError(`profile ${path} must hold a JSON object`);
  return { profile: json as RunProfile, where: `profile ${path}` };
}

/** The settings of one stage from a profile, checked to be an object of known keys. */
export function profileSection(profile: RunProfile | null, stage: string, knownKeys: readonly string[], where: string): Record<string, unknown> {
  if (!profile) return {};
  const section = profile[stage];
  if (section === undefined) return {};
  if (typeof section !== 'object' || section === null || Array.isArray(section)) throw new UsageError(`${where}: "${stage}" must be an object of settings`);
  for (const key of Object.keys(section)) {
    if (!knownKeys.includes(key)) throw new UsageError(`${where}: "${stage}.${key}" is not a setting (known: ${knownKeys.join(', ')})`);
  }
  return section as Record<string, unknown>;
}

import { existsSync } from 'node:fs';
import { readJsonFile } from '../util/read-json-file.js';
import { UsageError } from '../util/errors.js';
import type { OptionSpec } from './option-spec.js';

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

/**
 * Read one section of a run profile (JSON, e.g. configs/profiles/station-low-cpu.json) through
 * the same option specs the command line uses, so a profile and the flags cannot disagree on
 * names or parsing. Keys are the specs' keys; text values go through the spec's parser, numbers
 * and null are taken as they are (the module's resolve function validates them), and flags
 * without a value take true or false. Unknown keys and wrong types are errors naming the field.
 */
export function profileSection<T>(specs: readonly OptionSpec[], section: unknown, where: string): Partial<T> {
  if (section === undefined) return {};
  if (typeof section !== 'object' || section === null || Array.isArray(section)) {
    throw new UsageError(`${where} in the profile must be a JSON object of options`);
  }
  const out: Record<string, unknown> = {};
  for (const [key, value] of Object.entries(section)) {
    const spec = specs.find((s) => s.key === key);
    if (!spec) throw new UsageError(`${where}.${key} in the profile is not a known option; known: ${specs.map((s) => s.key).join(', ')}`);
    if (!spec.parse) {
      if (typeof value !== 'boolean') throw new UsageError(`${where}.${key} in the profile must be true or false`);
      out[key] = value;
    } else if (typeof value === 'string') {
      out[key] = spec.parse(value);
    } else if (typeof value === 'number' || value === null) {
      out[key] = value;
    } else {
      throw new UsageError(`${where}.${key} in the profile must be a number or text like "64M"`);
    }
  }
  return out as Partial<T>;
}

import { existsSync } from 'node:fs';
import { UsageError } from '../util/errors.js';
import { readJsonFile } from '../util/read-json-file.js';
import { checkOptionValue, flagGivenValue, parseOptionText, type OptionSpec, type OptionValue } from './option-spec.js';

/**
 * A run profile (configs/profiles/*.json): an "about" line and settings per stage, each
 * section named after its stage ("analysis", "tracker", "station", "log", "mqtt") and keyed by
 * the option names as written on the command line without the dashes:
 *   {"about": "...", "tracker": {"bearing-noise": 2, "max-tracks": 4}, "log": {"rotate-size": "32M"}}
 * Values are JSON numbers, true/false for switches (true: as if the switch were given, so
 * "no-voting": true turns voting off), null for "none", or text parsed as on the command line
 * ("32M", "never"). Options given on the command line win over the profile's.
 *
 * The whole profile is read and checked when it is loaded, before anything starts: an unknown
 * section, an unknown option or a bad value is an error naming the file and the key.
 */
export interface RunProfile {
  /** The file read. */
  readonly path: string;
  readonly about: string | null;
  /** Checked values per section, under the stages' option keys. */
  readonly sections: ReadonlyMap<string, Readonly<Record<string, OptionValue>>>;
}

/** The sections a profile may hold: section name -> the stage's option specs. */
export type ProfileSections = Readonly<Record<string, readonly OptionSpec[]>>;

/** A preset name (configs/profiles/NAME.json) or a path. */
function profilePath(nameOrPath: string, profilesDir: string): string {
  const preset = `${profilesDir}${nameOrPath}.json`;
  const path = !existsSync(nameOrPath) && /^[\w.-]+$/.test(nameOrPath) && existsSync(preset) ? preset : nameOrPath;
  if (!existsSync(path)) throw new UsageError(`--profile ${nameOrPath}: no such profile file or preset (presets are in ${profilesDir})`);
  return path;
}

function isObject(v: unknown): v is Readonly<Record<string, unknown>> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/** One section's values, read through its specs. */
function readSection(specs: readonly OptionSpec[], section: unknown, where: string): Record<string, OptionValue> {
  if (!isObject(section)) throw new UsageError(`${where} must be a JSON object of options, e.g. {"${specs[0]?.name ?? 'name'}": ...}`);
  const out: Record<string, OptionValue> = {};
  for (const [name, value] of Object.entries(section)) {
    const spec = specs.find((s) => s.name === name);
    const label = `${where}.${name}`;
    if (!spec) throw new UsageError(`${label} is not a known option; known: ${specs.map((s) => s.name).join(', ')}`);
    const v = typeof value === 'string' ? parseOptionText(spec, value, label) : checkOptionValue(spec, value, label);
    // A switch in a profile says whether it is given, as on the command line: "no-voting": true turns voting off.
    out[spec.key] = spec.type === 'flag' ? (v === true ? flagGivenValue(spec) : spec.default) : v;
  }
  return out;
}

/** Read and check a whole profile against the sections the program knows. */
export function loadProfile(nameOrPath: string, profilesDir: string, known: ProfileSections): RunProfile {
  const path = profilePath(nameOrPath, profilesDir);
  const json = readJsonFile(path, 'profile', '--profile');
  const where = `profile ${path}`;
  if (!isObject(json)) throw new UsageError(`${where} must hold a JSON object: {"about": "...", "tracker": {...}, ...}`);
  let about: string | null = null;
  const sections = new Map<string, Record<string, OptionValue>>();
  for (const [name, value] of Object.entries(json)) {
    if (name === 'about') {
      if (typeof value !== 'string') throw new UsageError(`${where}: "about" must be text`);
      about = value;
      continue;
    }
    const specs = known[name];
    if (specs === undefined) {
      throw new UsageError(`${where}: "${name}" is not a known section; known: about, ${Object.keys(known).join(', ')}`);
    }
    sections.set(name, readSection(specs, value, `${where}: ${name}`));
  }
  return { path, about, sections };
}

/** A section's values under the stage's option keys (none when the profile has no such section). */
export function profileValues<T>(profile: RunProfile | null, section: string): Partial<T> {
  return { ...(profile?.sections.get(section) ?? {}) } as Partial<T>;
}

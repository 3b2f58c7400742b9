/**
 * One way to declare what a user can set. Each stage lists its options as specs next to its
 * typed options object (e.g. analysis/analysis-options.ts, track/options.ts); from the specs
 * come the command-line options and --help (cli/options.ts), the run-profile sections
 * (options/profile.ts), the checks of values set in code, and the README's option tables
 * (test/layout/readme-options.test.ts holds them to the specs).
 *
 * A spec names the option as the user writes it: `--bearing-noise` on the command line,
 * `"bearing-noise"` in a profile section. Values are parsed and checked here, once; a bad
 * one is a UsageError (exit 2) that names the option and says what to give instead.
 */
import { UsageError } from '../util/errors.js';
import { parseByteSize } from '../util/byte-size.js';

/** The values an option can hold. null: off, none or no limit (see `none`). */
export type OptionValue = number | string | boolean | null;

interface SpecBase<K extends string> {
  /** Field of the stage's options object. */
  readonly key: K;
  /** The option as the user writes it, without dashes: `--NAME` on the command line, `"NAME"` in a profile. */
  readonly name: string;
  /** One line for --help. */
  readonly help: string;
  /** Shown as the default instead of the value, when the default follows from other settings (e.g. 'frame / 2'). */
  readonly defaultText?: string;
  /** A one-letter alias on the command line (-o for --out). */
  readonly short?: string;
}

/** A number within [min, max] (min excluded with minExclusive), optionally whole. */
export interface NumberSpec<K extends string = string> extends SpecBase<K> {
  readonly type: 'number';
  /** Placeholder in --help: --NAME <arg>. */
  readonly arg: string;
  /** Unit in messages ('' for none). */
  readonly unit: string;
  readonly min: number;
  readonly max: number;
  readonly minExclusive: boolean;
  readonly integer: boolean;
  readonly default: number | null;
  /** The word for "none" (the value null), accepted as a value and shown as such, e.g. 'never'. */
  readonly none?: string;
}

/** A byte size written like 64M, 2G or 65536 (powers of 1024), at least min bytes. */
export interface SizeSpec<K extends string = string> extends SpecBase<K> {
  readonly type: 'size';
  readonly arg: string;
  readonly min: number;
  readonly default: number | null;
  readonly none?: string;
}

/** One of a few words. */
export interface ChoiceSpec<K extends string = string> extends SpecBase<K> {
  readonly type: 'choice';
  readonly arg: string;
  readonly choices: readonly string[];
  readonly default: string;
}

/** Free text (a path, an address, a name), with an optional check that returns the problem or null. */
export interface TextSpec<K extends string = string> extends SpecBase<K> {
  readonly type: 'text';
  readonly arg: string;
  readonly default: string | null;
  readonly none?: string;
  readonly check?: (value: string) => string | null;
  /** A secret (an access token): messages do not repeat it. */
  readonly secret?: boolean;
}

/** A switch without a value: given, it sets the opposite of its default (`--no-voting` turns voting off). */
export interface FlagSpec<K extends string = string> extends SpecBase<K> {
  readonly type: 'flag';
  readonly default: boolean;
}

export type OptionSpec<K extends string = string> = NumberSpec<K> | SizeSpec<K> | ChoiceSpec<K> | TextSpec<K> | FlagSpec<K>;

// ---------- declaring ----------

export interface NumberRange {
  readonly min: number;
  readonly max: number;
  /** min itself is not allowed (the value must be greater). */
  readonly minExclusive?: boolean;
  readonly integer?: boolean;
  /** Unit in messages; default: none. */
  readonly unit?: string;
}

interface Extra {
  readonly defaultText?: string;
  readonly none?: string;
  readonly short?: string;
}

export function numberOption<K extends string>(key: K, name: string, arg: string, def: number | null, range: NumberRange, help: string, extra: Extra = {}): NumberSpec<K> {
  return {
    type: 'number',
    key,
    name,
    arg,
    help,
    unit: range.unit ?? '',
    min: range.min,
    max: range.max,
    minExclusive: range.minExclusive ?? false,
    integer: range.integer ?? false,
    default: def,
    ...extra,
  };
}

export function sizeOption<K extends string>(key: K, name: string, def: number | null, min: number, help: string, extra: Extra = {}): SizeSpec<K> {
  return { type: 'size', key, name, arg: 'size', min, default: def, help, ...extra };
}

export function choiceOption<K extends string>(key: K, name: string, choices: readonly string[], def: string, help: string, extra: Extra = {}): ChoiceSpec<K> {
  return { type: 'choice', key, name, arg: choices.join('|'), choices, default: def, help, ...extra };
}

export function textOption<K extends string>(
  key: K,
  name: string,
  arg: string,
  def: string | null,
  help: string,
  extra: Extra & { check?: (value: string) => string | null; secret?: boolean } = {},
): TextSpec<K> {
  return { type: 'text', key, name, arg, default: def, help, ...extra };
}

export function flagOption<K extends string>(key: K, name: string, def: boolean, help: string): FlagSpec<K> {
  return { type: 'flag', key, name, default: def, help };
}

/** The same option with another default (a command whose default differs, e.g. --rate without one for scan --stdin). */
export function withDefault<K extends string>(spec: NumberSpec<K>, def: number | null, shown?: string): NumberSpec<K> {
  return { ...spec, default: def, defaultText: shown };
}

// ---------- describing ----------

/** '--bearing-noise' */
export function flagOf(spec: OptionSpec): string {
  return `--${spec.name}`;
}

/** '--bearing-noise <deg>', as --help and the README show it. */
export function usageOf(spec: OptionSpec): string {
  return spec.type === 'flag' ? flagOf(spec) : `${flagOf(spec)} <${spec.arg}>`;
}

/** 64 MiB -> '64M': the shortest exact form with a power-of-1024 suffix. */
export function formatSize(bytes: number): string {
  const units = ['', 'K', 'M', 'G', 'T'];
  let v = bytes;
  let i = 0;
  while (i < units.length - 1 && v >= 1024 && v % 1024 === 0) {
    v /= 1024;
    i++;
  }
  return `${v}${units[i]}`;
}

/** The default as --help and the README show it; 'off' for a switch (it is off unless given). */
export function defaultText(spec: OptionSpec): string {
  if (spec.defaultText !== undefined) return spec.defaultText;
  if (spec.type === 'flag') return 'off';
  if (spec.default === null) return spec.none ?? 'none';
  if (spec.type === 'size') return formatSize(spec.default);
  return String(spec.default);
}

/** What a good value looks like, for messages: 'a number above 0 and at most 45 deg'. */
export function expectation(spec: OptionSpec): string {
  const orNone = 'none' in spec && spec.none !== undefined ? `, or '${spec.none}'` : '';
  switch (spec.type) {
    case 'number': {
      const unit = spec.unit === '' ? '' : ` ${spec.unit}`;
      const kind = spec.integer ? 'a whole number' : 'a number';
      const low = spec.minExclusive ? `above ${spec.min}` : `from ${spec.min}`;
      const high = spec.minExclusive ? ` and at most ${spec.max}` : ` to ${spec.max}`;
      return `${kind} ${low}${Number.isFinite(spec.max) ? high : ' up'}${unit}${orNone}`;
    }
    case 'size':
      return `a size like 500M, 2G or 65536, at least ${formatSize(spec.min)}${orNone}`;
    case 'choice':
      return `one of ${spec.choices.join(', ')}`;
    case 'text':
      return `a ${spec.arg}${orNone}`;
    case 'flag':
      return 'true or false';
  }
}

// ---------- parsing and checking ----------

function fail(label: string, shown: string, problem: string, spec: OptionSpec): never {
  const what = spec.type === 'text' && spec.secret ? 'the value' : shown;
  throw new UsageError(`${label}: ${what} ${problem}; give ${expectation(spec)}.`);
}

/**
 * Check a value (from code, a profile, or parsed text) against its spec and return it.
 * `label` names the option in the message: '--gate' on the command line, 'profile F: tracker.gate'.
 */
export function checkOptionValue(spec: OptionSpec, value: unknown, label: string = flagOf(spec)): OptionValue {
  const shown = typeof value === 'string' ? `'${value}'` : JSON.stringify(value) ?? String(value);
  if (value === null) {
    if (spec.type !== 'flag' && spec.default === null) return null;
    if ('none' in spec && spec.none !== undefined) return null;
    return fail(label, 'null', 'is not allowed', spec);
  }
  switch (spec.type) {
    case 'number': {
      if (typeof value !== 'number') return fail(label, shown, 'is not a number', spec);
      const low = spec.minExclusive ? value <= spec.min : value < spec.min;
      if (!Number.isFinite(value) || low || value > spec.max || (spec.integer && !Number.isInteger(value))) {
        return fail(label, String(value), 'is out of range', spec);
      }
      return value;
    }
    case 'size':
      if (typeof value !== 'number' || !Number.isSafeInteger(value) || value < 0) return fail(label, shown, 'is not a size', spec);
      if (value < spec.min) return fail(label, formatSize(value), 'is too small', spec);
      return value;
    case 'choice':
      if (typeof value !== 'string' || !spec.choices.includes(value)) return fail(label, shown, 'is not known', spec);
      return value;
    case 'text': {
      if (typeof value !== 'string') return fail(label, shown, 'is not text', spec);
      const problem = value.trim() === '' ? 'is empty' : (spec.check?.(value) ?? null);
      if (problem !== null) return fail(label, shown, problem, spec);
      return value;
    }
    case 'flag':
      if (typeof value !== 'boolean') return fail(label, shown, 'is not true or false', spec);
      return value;
  }
}

/**
 * Parse text as written on the command line or as a string in a profile, and check it. For a
 * switch, the text is 'true' or 'false' (a profile may write either).
 */
export function parseOptionText(spec: OptionSpec, raw: string, label: string = flagOf(spec)): OptionValue {
  const text = raw.trim();
  if ('none' in spec && spec.none !== undefined && text === spec.none) return null;
  switch (spec.type) {
    case 'number': {
      const n = Number(text);
      if (text === '' || !Number.isFinite(n)) return fail(label, `'${raw}'`, 'is not a number', spec);
      return checkOptionValue(spec, n, label);
    }
    case 'size': {
      let bytes: number;
      try {
        bytes = parseByteSize(text);
      } catch {
        return fail(label, `'${raw}'`, 'is not a size', spec);
      }
      return checkOptionValue(spec, bytes, label);
    }
    case 'flag':
      if (text !== 'true' && text !== 'false') return fail(label, `'${raw}'`, 'is not true or false', spec);
      return text === 'true';
    case 'choice':
    case 'text':
      return checkOptionValue(spec, raw, label);
  }
}

/** The value a switch takes when it is given (the opposite of its default). */
export function flagGivenValue(spec: FlagSpec): boolean {
  return !spec.default;
}

/** Every spec's default, under the stage's keys (null where the default follows from other settings). */
export function specDefaults<K extends string>(specs: readonly OptionSpec<K>[]): Record<K, OptionValue> {
  const out = {} as Record<K, OptionValue>;
  for (const s of specs) out[s.key] = s.default;
  return out;
}

/**
 * Check the options given (under the stage's keys; undefined = not given) against the specs,
 * refusing keys no spec has except `extraKeys` (fields set by code, e.g. the tracker's mirror,
 * checked by the caller). Returns the given values.
 */
export function checkGivenOptions<K extends string>(
  specs: readonly OptionSpec<K>[],
  given: Readonly<Partial<Record<string, unknown>>>,
  where: string,
  extraKeys: readonly string[] = [],
): Partial<Record<K, OptionValue>> {
  const out: Partial<Record<K, OptionValue>> = {};
  for (const [key, value] of Object.entries(given)) {
    if (value === undefined || extraKeys.includes(key)) continue;
    const spec = specs.find((s) => s.key === key);
    if (!spec) throw new UsageError(`${where}: unknown option '${key}'; known options are ${specs.map((s) => s.key).join(', ')}.`);
    out[spec.key] = checkOptionValue(spec, value);
  }
  return out;
}

/**
 * Defaults with the given options laid over them, every given value checked: the options
 * object of a stage. `T` is the stage's options type; its fields are the specs' keys (plus the
 * extra keys the caller checks).
 */
export function resolveWithSpecs<T extends object>(
  specs: readonly OptionSpec<Extract<keyof T, string>>[],
  given: Readonly<Partial<T>>,
  where: string,
  extraKeys: readonly string[] = [],
): T {
  const checked = checkGivenOptions(specs, given as Readonly<Partial<Record<string, unknown>>>, where, extraKeys);
  const out: Record<string, unknown> = { ...specDefaults(specs), ...checked };
  for (const k of extraKeys) {
    const v = (given as Readonly<Record<string, unknown>>)[k];
    if (v !== undefined) out[k] = v;
  }
  return out as T;
}

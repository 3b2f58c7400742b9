import { UsageError } from '../errors.js';

/**
 * One user-settable option, described once: the typed options object of a module holds its
 * default and validation, and this spec is what the CLI turns into a commander option
 * (see src/cli/option-specs.ts). The key is the camelCase form of the long flag, which is
 * the name commander gives the parsed value.
 */
export interface OptionSpec<O> {
  /** Property of the options object this flag sets. */
  key: keyof O & string;
  /** commander flag text, e.g. '--max-disk <size>' or '--log-frames'. */
  flag: string;
  help: string;
  /** Default shown in --help (the value itself lives in the module's defaults object). */
  defaultText?: string;
  /** Turns the raw text into the option's value; throws UsageError on bad input. Absent for boolean flags. */
  parse?: (raw: string) => O[keyof O];
}

/** camelCase name commander derives from a flag: '--max-disk <size>' -> 'maxDisk'. */
export function flagKey(flag: string): string {
  const long = flag.split(/[ ,]+/).find((part) => part.startsWith('--'));
  if (!long) throw new Error(`option spec flag '${flag}' has no long form`);
  return long.slice(2).replace(/-([a-z])/g, (_m, c: string) => c.toUpperCase());
}

/**
 * Read one section of a run profile (JSON) into a partial options object, through the same
 * specs the CLI uses: keys are the option keys; text values go through the spec's parser,
 * numbers and booleans are taken as they are (the resolve function then validates them).
 * Unknown keys and wrong types are UsageErrors naming the field.
 */
export function profileSection<O>(specs: readonly OptionSpec<O>[], section: unknown, where: string): Partial<O> {
  if (section === undefined) return {};
  if (typeof section !== 'object' || section === null || Array.isArray(section)) {
    throw new UsageError(`${where} must be a JSON object of options`);
  }
  const out: Partial<O> = {};
  for (const [key, value] of Object.entries(section)) {
    const spec = specs.find((s) => s.key === key);
    if (!spec) throw new UsageError(`${where}.${key} is not a known option; known: ${specs.map((s) => s.key).join(', ')}`);
    if (!spec.parse) {
      if (typeof value !== 'boolean') throw new UsageError(`${where}.${key} must be true or false`);
      out[spec.key] = value as O[keyof O & string];
    } else if (typeof value === 'string') {
      out[spec.key] = spec.parse(value) as O[keyof O & string];
    } else if (typeof value === 'number' || value === null) {
      out[spec.key] = value as O[keyof O & string];
    } else {
      throw new UsageError(`${where}.${key} must be a number or text like "64M"`);
    }
  }
  return out;
}

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

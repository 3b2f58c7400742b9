/**
 * One home per option: each stage declares the numbers a user can set as specs next to its
 * typed options object; the CLI turns specs into command-line options (src/cli/options.ts).
 */
export interface OptionSpec<K extends string = string> {
  /** Key in the stage's options object. */
  readonly key: K;
  /** commander flag text, e.g. '--hop <samples>'. */
  readonly flag: string;
  readonly help: string;
  /** Default shown in --help (the stage applies it, not commander); null when there is none. */
  readonly defaultValue: string | number | boolean | null;
  /** Parser for the raw command-line text; throws with a message on bad input. */
  readonly parse?: (raw: string) => unknown;
}

import { InvalidArgumentError, Option, type Command } from 'commander';
import { UsageError } from '../util/errors.js';
import { defaultText, flagGivenValue, parseOptionText, specDefaults, usageOf, type OptionSpec, type OptionValue } from '../options/option-spec.js';

/**
 * The command line from option specs (src/options/option-spec.ts): every option of every
 * command is added here, with its default in --help, and parsed and checked as commander reads
 * it, so that a bad value stops the command before anything is opened.
 */

/** commander's name for an option's value: '--feed-max-clients' -> 'feedMaxClients', '--no-voting' -> 'voting'. */
export function attributeOf(spec: OptionSpec): string {
  return new Option(usageOf(spec)).attributeName();
}

function commandLineOf(spec: OptionSpec): string {
  return spec.short === undefined ? usageOf(spec) : `-${spec.short}, ${usageOf(spec)}`;
}

/** Add specs as command-line options. */
export function addOptions(cmd: Command, specs: readonly OptionSpec[]): Command {
  for (const spec of specs) {
    const shown = defaultText(spec);
    const help = spec.type === 'flag' ? spec.help : `${spec.help} (default: ${shown})`;
    const opt = new Option(commandLineOf(spec), help);
    if (spec.type !== 'flag') {
      opt.argParser((raw: string) => {
        try {
          return parseOptionText(spec, raw);
        } catch (err) {
          // commander prints "option '--x <n>' argument 'raw' is invalid." before it; keep the reason.
          throw new InvalidArgumentError(err instanceof UsageError ? err.message.replace(/^--[\w-]+: /, '') : String(err));
        }
      });
    }
    cmd.addOption(opt);
  }
  return cmd;
}

/**
 * The values given on the command line (not defaults), under the stages' keys: what is laid
 * over a profile's settings.
 */
export function givenOptions<T>(cmd: Command, specs: readonly OptionSpec[]): Partial<T> {
  const out: Record<string, OptionValue> = {};
  for (const spec of specs) {
    const attr = attributeOf(spec);
    if (cmd.getOptionValueSource(attr) !== 'cli') continue;
    const value: unknown = cmd.getOptionValue(attr);
    out[spec.key] = spec.type === 'flag' ? flagGivenValue(spec) : (value as OptionValue);
  }
  return out as Partial<T>;
}

/** Every option's value: the default, or what the command line gave. */
export function readOptions<T>(cmd: Command, specs: readonly OptionSpec[]): T {
  return { ...specDefaults(specs), ...givenOptions<Record<string, OptionValue>>(cmd, specs) } as T;
}

/** The flags (e.g. '--feed-port') of the specs given on the command line. */
export function givenFlags(cmd: Command, specs: readonly OptionSpec[]): string[] {
  return specs.filter((s) => cmd.getOptionValueSource(attributeOf(s)) === 'cli').map((s) => `--${s.name}`);
}

/** A UsageError naming the flags given that do not fit, with what to do about them. */
export function refuseStray(flags: readonly string[], what: string): void {
  if (flags.length > 0) throw new UsageError(`${flags.join(', ')}: ${what}`);
}

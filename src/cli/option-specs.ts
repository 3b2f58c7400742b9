import { type Command, InvalidArgumentError } from 'commander';
import { UsageError } from '../errors.js';
import type { OptionSpec } from '../station/option-spec.js';

/**
 * Turn option specs into commander options. A parser's UsageError becomes commander's
 * InvalidArgumentError, so commander names the flag in its one-line message (exit 2).
 */
export function addOptionSpecs<O>(cmd: Command, specs: readonly OptionSpec<O>[]): Command {
  for (const spec of specs) {
    const help = spec.defaultText ? `${spec.help} (default: ${spec.defaultText})` : spec.help;
    const parse = spec.parse;
    if (!parse) {
      cmd.option(spec.flag, help);
      continue;
    }
    cmd.option(spec.flag, help, (raw: string) => {
      try {
        return parse(raw);
      } catch (err) {
        if (err instanceof UsageError) throw new InvalidArgumentError(err.message);
        throw err;
      }
    });
  }
  return cmd;
}

import { InvalidArgumentError, Option, type Command } from 'commander';
import type { OptionSpec } from '../options/option-spec.js';
import { trackerOptionSpecs, type NumericOptionSpec } from '../track/options.js';
import { finiteNumber, positiveNumber } from './parse.js';

/** Add a stage's option specs to a command (one home per option: the stage's spec list). */
export function addSpecs(cmd: Command, specs: readonly OptionSpec[]): Command {
  for (const s of specs) {
    const help = s.defaultValue !== null && s.defaultValue !== undefined ? `${s.help} (default: ${String(s.defaultValue)})` : s.help;
    const opt = new Option(s.flag, help);
    const parse = s.parse;
    if (parse) {
      opt.argParser((raw: string) => {
        try {
          return parse(raw);
        } catch (err) {
          throw new InvalidArgumentError((err as Error).message);
        }
      });
    }
    cmd.addOption(opt);
  }
  return cmd;
}

/** Pick a spec list's values out of commander's parsed options, under the stage's keys. */
export function pickSpecs<T>(opts: Record<string, unknown>, specs: readonly OptionSpec[]): T {
  const out: Record<string, unknown> = {};
  for (const s of specs) {
    const v = opts[new Option(s.flag).attributeName()];
    if (v !== undefined) out[s.key] = v;
  }
  return out as T;
}

/** The array options shared by every command that analyses audio. */
export function addArrayOptions(cmd: Command): Command {
  return cmd
    .option('--spacing <m>', 'two-mic pair: spacing in metres (channel 0 left, channel 1 right)', positiveNumber)
    .option('--array <file.json>', 'geometry file of the array (3 to 8 mics, or a pair); presets in configs/arrays/')
    .option('--temperature <celsius>', 'air temperature; sets the speed of sound c = 331.3 sqrt(1 + T/273.15)', finiteNumber)
    .option('--speed-of-sound <m/s>', 'speed of sound directly (default 343 m/s)', finiteNumber);
}

/** The tracker's settable options as command-line specs (its own spec list is the home). */
export function trackerCliSpecs(): OptionSpec[] {
  return trackerOptionSpecs
    .filter((s): s is NumericOptionSpec => s.kind === 'number' && s.flag !== null)
    .map((s) => ({ key: s.key, flag: s.flag, help: s.unit ? `${s.help} [${s.unit}]` : s.help, defaultValue: s.default, parse: (raw: string) => s.parse(raw) }));
}

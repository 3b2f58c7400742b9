import { pairGeometry, type ArrayGeometry } from '../geometry/array-geometry.js';
import { loadArrayRef } from '../geometry/array-presets.js';
import { resolveSpeedOfSound, soundSpeedOptionSpecs } from '../geometry/sound-speed.js';
import { numberOption, textOption, type OptionSpec } from '../options/option-spec.js';
import { UsageError } from '../util/errors.js';
export { configsDir } from '../util/configs.js';

export interface ArrayOptionValues {
  spacing?: number | null;
  array?: string | null;
  temperature?: number | null;
  speedOfSound?: number | null;
}

/** The array and the speed of sound: every command that analyses audio takes them. */
export const arrayOptionSpecs: readonly OptionSpec<keyof ArrayOptionValues>[] = [
  numberOption('spacing', 'spacing', 'm', null, { min: 0, max: 1000, minExclusive: true, unit: 'm' }, 'two-mic pair: spacing in metres (channel 0 left, channel 1 right)', { defaultText: 'none' }),
  textOption('array', 'array', 'file.json', null, 'geometry file of the array (3 to 8 mics, or a pair); presets in configs/arrays/', { defaultText: 'none' }),
  ...soundSpeedOptionSpecs,
];

/**
 * The array from --spacing D (the pair of interface.md) or --array FILE (a geometry file, or
 * the name of a preset in configs/arrays/). Exactly one of the two.
 */
export function resolveArray(opts: ArrayOptionValues): ArrayGeometry {
  const spacing = opts.spacing ?? undefined;
  const array = opts.array ?? undefined;
  if (spacing !== undefined && array !== undefined) {
    throw new UsageError('give either --spacing (a two-mic pair) or --array (a geometry file), not both');
  }
  if (spacing !== undefined) return pairGeometry(spacing);
  if (array !== undefined) return loadArrayRef(array, process.cwd(), '--array');
  throw new UsageError('say what the array is: --spacing D for a two-mic pair (metres), or --array FILE.json (see configs/arrays/)');
}

export function resolveSpeed(opts: ArrayOptionValues): number {
  return resolveSpeedOfSound({ speedOfSound: opts.speedOfSound ?? undefined, temperature: opts.temperature ?? undefined });
}

import { UsageError } from '../util/errors.js';
export { configsDir } from '../util/configs.js';
import { pairGeometry, type ArrayGeometry } from '../geometry/array-geometry.js';
import { loadArrayRef } from '../geometry/array-presets.js';
import { resolveSpeedOfSound } from '../geometry/sound-speed.js';


export interface ArrayOptionValues {
  spacing?: number;
  array?: string;
  temperature?: number;
  speedOfSound?: number;
}

/**
 * The array from --spacing D (the pair of interface.md) or --array FILE (a geometry file, or
 * the name of a preset in configs/arrays/). Exactly one of the two.
 */
export function resolveArray(opts: ArrayOptionValues): ArrayGeometry {
  if (opts.spacing !== undefined && opts.array !== undefined) {
    throw new UsageError('give either --spacing (a two-mic pair) or --array (a geometry file), not both');
  }
  if (opts.spacing !== undefined) return pairGeometry(opts.spacing);
  if (opts.array !== undefined) return loadArrayRef(opts.array, process.cwd(), '--array');
  throw new UsageError('say what the array is: --spacing D for a two-mic pair (metres), or --array FILE.json (see configs/arrays/)');
}

export function resolveSpeed(opts: ArrayOptionValues): number {
  return resolveSpeedOfSound({ speedOfSound: opts.speedOfSound, temperature: opts.temperature });
}

import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { UsageError } from '../errors.js';
import { pairGeometry, type ArrayGeometry } from '../geometry/array-geometry.js';
import { loadGeometryFile } from '../geometry/geometry-file.js';
import { resolveSpeedOfSound } from '../geometry/sound-speed.js';

/** The folder of shipped configs (geometry presets, scenes, profiles). */
export function configsDir(): string {
  return fileURLToPath(new URL('../../configs/', import.meta.url));
}

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
  if (opts.array !== undefined) {
    const preset = `${configsDir()}arrays/${opts.array}.json`;
    if (!existsSync(opts.array) && /^[\w.-]+$/.test(opts.array) && existsSync(preset)) return loadGeometryFile(preset);
    return loadGeometryFile(opts.array);
  }
  throw new UsageError('say what the array is: --spacing D for a two-mic pair (metres), or --array FILE.json (see configs/arrays/)');
}

export function resolveSpeed(opts: ArrayOptionValues): number {
  return resolveSpeedOfSound({ speedOfSound: opts.speedOfSound, temperature: opts.temperature });
}

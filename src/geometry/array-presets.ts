import { configsDir } from '../util/configs.js';
import { existsSync, readdirSync } from 'node:fs';
import { isAbsolute, join } from 'node:path';
import { UsageError } from '../util/errors.js';
import type { ArrayGeometry } from './array-geometry.js';
import { loadGeometryFile } from './geometry-file.js';

/** configs/arrays of the installed package (src/geometry or dist/geometry -> ../../configs/arrays). */
export function arrayPresetDir(): string {
  return join(configsDir(), 'arrays');
}

export function arrayPresetNames(): string[] {
  const dir = arrayPresetDir();
  if (!existsSync(dir)) return [];
  return readdirSync(dir)
    .filter((f) => f.endsWith('.json'))
    .map((f) => f.slice(0, -5))
    .sort();
}

/** True when an array reference names a file rather than a preset. */
export function isGeometryPath(ref: string): boolean {
  return ref.endsWith('.json') || ref.includes('/') || ref.includes('\\');
}

/**
 * An array reference: a preset name from configs/arrays (e.g. "square-20cm") or a path to a
 * geometry file (anything ending in .json or holding a slash; relative to `baseDir`).
 */
export function loadArrayRef(ref: string, baseDir: string, field: string): ArrayGeometry {
  if (isGeometryPath(ref)) {
    return loadGeometryFile(isAbsolute(ref) ? ref : join(baseDir, ref));
  }
  const file = join(arrayPresetDir(), `${ref}.json`);
  if (!existsSync(file)) {
    throw new UsageError(`${field} "${ref}" is not an array preset (known: ${arrayPresetNames().join(', ')}): give a preset name or a path to a geometry file`);
  }
  return loadGeometryFile(file);
}

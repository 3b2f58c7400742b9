/**
 * The arrays of the accuracy matrix: the presets of configs/arrays, plus two that lie off the
 * x axis of interface.md's pair (a pair along y, a line of four) and the 0.25 m pair used to
 * analyse the KEMAR dummy head.
 */
import { pairGeometry, type ArrayGeometry } from '../../../src/geometry/array-geometry.js';
import { arrayPresetNames, loadArrayRef } from '../../../src/geometry/array-presets.js';
import type { Vec3 } from '../../../src/geometry/vec3.js';

/** Spacing (m) the KEMAR head is analysed with: both its low-band (about 3a) and high-band delays fit the window. */
export const KEMAR_SPACING_M = 0.25;

const CUSTOM: Record<string, () => ArrayGeometry> = {
  // A pair laid along y: channel 0 behind, channel 1 in front. It resolves left from right but not front from back.
  'pair-y-20cm': () => custom('pair-y-20cm', [
    [0, -0.1, 0],
    [0, 0.1, 0],
  ]),
  // A line of four mics along x, 10 cm apart.
  'line4-10cm': () => custom('line4-10cm', [
    [-0.15, 0, 0],
    [-0.05, 0, 0],
    [0.05, 0, 0],
    [0.15, 0, 0],
  ]),
  kemar: () => pairGeometry(KEMAR_SPACING_M),
};

function custom(name: string, positions: Vec3[]): ArrayGeometry {
  return { name, headingDeg: null, mics: positions.map((position, channel) => ({ channel, position })) };
}

/** Short names for the table. */
export const SHORT_NAME: Record<string, string> = {
  'pair-10cm': 'p10',
  'pair-20cm': 'p20',
  'pair-50cm': 'p50',
  'triangle-10cm': 'tri10',
  'square-10cm': 'sq10',
  'square-20cm': 'sq20',
  'tetrahedron-10cm': 'tet10',
  'circle6-r5cm': 'c6',
  'circle8-r5cm': 'c8',
  'pair-y-20cm': 'py20',
  'line4-10cm': 'line4',
  kemar: 'kemar',
};

/** Every array of the geometry sweep: the presets, then the two off-axis ones. */
export function sweptGeometries(): string[] {
  return [...arrayPresetNames(), 'pair-y-20cm', 'line4-10cm'];
}

export function matrixGeometry(name: string): ArrayGeometry {
  const make = CUSTOM[name];
  if (make) return make();
  return loadArrayRef(name, '.', 'matrix geometry');
}

/**
 * Wiring faults on the bench: swapped channels, an inverted channel, a 3 dB gain mismatch,
 * and a clean array that passes. Takes made by numpy (make_takes.py: exact far-field delays
 * t_i = -p_i . u / c by the DFT shift theorem, then gain, sign and channel order applied per
 * channel), independently of bearline. Geometry: the 10 cm square of interface.md's example.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { resolveBenchCheckOptions } from '../../src/bench-check/options.js';
import { checkItems, overallStatus } from '../../src/bench-check/verdict.js';
import { pairGeometry, type ArrayGeometry } from '../../src/geometry/array-geometry.js';
import { tempDir } from '../helpers/temp-dir.js';
import { AROUND, fitTakes, numpyTakes, SQUARE, square } from './bench-helpers.js';

const PAIR_AZ = [-60, -30, 0, 30, 60].map((az) => ({ az }));
const base = { rate: 48000, duration_s: 1, positions_m: SQUARE };

function status(fit: ReturnType<typeof fitTakes>, item: string): string | undefined {
  return checkItems(fit, resolveBenchCheckOptions({})).find((i) => i.item === item)?.status;
}

describe('check-array finds wiring faults (numpy takes, 4-mic square and a pair)', () => {
  const tmp = tempDir('bearline-check-faults-');
  afterAll(() => tmp.cleanup());

  it('passes a clean square array: positions within 1 mm, offsets under 1 us, every item pass', () => {
    const fit = fitTakes(square, numpyTakes(tmp.dir, 'clean', base, AROUND));
    expect(fit.swapped).toBe(false);
    for (let c = 0; c < 4; c++) {
      const p = fit.positions![c]!;
      expect(Math.hypot(p[0] - SQUARE[c]![0]!, p[1] - SQUARE[c]![1]!)).toBeLessThan(0.001);
    }
    for (const o of fit.offset) expect(Math.abs(o.value)).toBeLessThan(1e-6);
    expect(fit.polarityInverted).toEqual([false, false, false, false]);
    for (const g of fit.gainDb) expect(Math.abs(g.value)).toBeLessThan(0.1);
    const items = checkItems(fit, resolveBenchCheckOptions({}));
    expect(items.filter((i) => i.status !== 'pass' && i.status !== 'not measured')).toEqual([]);
    expect(overallStatus(items)).toBe('pass');
  });

  it('detects channels 1 and 2 swapped on the square array', () => {
    const fit = fitTakes(square, numpyTakes(tmp.dir, 'swap', { ...base, order: [0, 2, 1, 3] }, AROUND));
    expect(fit.swapped).toBe(true);
    expect(fit.channelMap).toEqual([0, 2, 1, 3]);
    expect(status(fit, 'channel order')).toBe('fail');
    // With the order known, the fitted positions sit on the drawn ones and the directions agree.
    expect(fit.residualDegRms).toBeLessThan(0.5);
  });

  it('detects a swapped pair (the fitted spacing comes out reversed)', () => {
    const fit = fitTakes(pairGeometry(0.2), numpyTakes(tmp.dir, 'pswap', { ...base, positions_m: [[-0.1, 0, 0], [0.1, 0, 0]], order: [1, 0] }, PAIR_AZ));
    expect(fit.swapped).toBe(true);
    expect(fit.channelMap).toEqual([1, 0]);
    expect(Math.abs(fit.spacing!.value - 0.2)).toBeLessThan(0.001);
  });

  it('detects channel 2 of the square inverted (sign of the correlation peak)', () => {
    const fit = fitTakes(square, numpyTakes(tmp.dir, 'inv', { ...base, polarity: [1, 1, -1, 1] }, AROUND));
    expect(fit.polarityInverted).toEqual([false, false, true, false]);
    expect(status(fit, 'polarity ch2')).toBe('fail');
    expect(status(fit, 'polarity ch1')).toBe('pass');
    // The inverted channel's delays are still right: the positions fit.
    expect(fit.swapped).toBe(false);
    expect(fit.residualDegRms).toBeLessThan(0.5);
  });

  it('measures a 3 dB gain mismatch on channel 3 within 0.1 dB and fails it', () => {
    const fit = fitTakes(square, numpyTakes(tmp.dir, 'gain', { ...base, gain_db: [0, 0, 0, -3] }, AROUND));
    expect(Math.abs(fit.gainDb[3]!.value + 3)).toBeLessThan(0.1);
    expect(Math.abs(fit.gainDb[1]!.value)).toBeLessThan(0.1);
    expect(status(fit, 'gain ch3')).toBe('fail');
    expect(status(fit, 'gain ch1')).toBe('pass');
  });

  it('says the positions are not measured from a single direction, and still fits the offsets', () => {
    const fit = fitTakes(square, numpyTakes(tmp.dir, 'one', { ...base, skew_s: [0, 0, 50e-6, 0] }, [{ az: 30 }]));
    expect(fit.positions).toBeNull();
    expect(fit.swapped).toBeNull();
    expect(fit.notes.join(' ')).toMatch(/positions not measured/);
    expect(status(fit, 'position ch1')).toBe('not measured');
    // The file's positions are the true ones here, so the offsets come out as made.
    expect(Math.abs(fit.offset[2]!.value - 50e-6)).toBeLessThan(1e-6);
    expect(Math.abs(fit.offset[1]!.value)).toBeLessThan(1e-6);
  });
});

describe('check-array on a 3-D array from AZ,EL takes (numpy takes)', () => {
  const tmp = tempDir('bearline-check-3d-');
  afterAll(() => tmp.cleanup());
  // A tetrahedron of 6 cm edges; true mic 3 sits 6 mm higher than its file says.
  const TRUE: number[][] = [
    [0, 0.0346, -0.0122],
    [0.03, -0.0173, -0.0122],
    [-0.03, -0.0173, -0.0122],
    [0, 0, 0.0367 + 0.006],
  ];
  const fileGeo: ArrayGeometry = {
    name: 'tetra',
    headingDeg: null,
    mics: TRUE.map((p, i) => ({ channel: i, position: [p[0]!, p[1]!, i === 3 ? p[2]! - 0.006 : p[2]!] as const })),
  };
  const DIRS = [
    { az: 0, el: 0 }, { az: 90, el: 0 }, { az: 180, el: 0 }, { az: -90, el: 0 },
    { az: 45, el: 40 }, { az: -135, el: 40 }, { az: 135, el: -40 }, { az: -45, el: -40 },
  ];

  it('fits the raised mic in 3-D within 1 mm and leaves under half a degree', () => {
    const fit = fitTakes(fileGeo, numpyTakes(tmp.dir, 'tetra', { rate: 48000, duration_s: 1, positions_m: TRUE }, DIRS));
    expect(fit.fittedDims).toBe(3);
    // Positions are centred on the file's centroid, so compare shapes: mic 3 relative to mic 0.
    const rel = (p: readonly number[], q: readonly number[]): number[] => [p[0]! - q[0]!, p[1]! - q[1]!, p[2]! - q[2]!];
    const fitted = rel(fit.positions![3]!, fit.positions![0]!);
    const truth = rel(TRUE[3]!, TRUE[0]!);
    expect(Math.hypot(fitted[0]! - truth[0]!, fitted[1]! - truth[1]!, fitted[2]! - truth[2]!)).toBeLessThan(0.001);
    // Centred on the file's centroid, a 6 mm error of one mic shows as 4.5 mm on it: beyond 3 mm.
    expect(status(fit, 'position ch3')).not.toBe('pass');
    expect(fit.residualDegRms).toBeLessThan(0.5);
    expect(fit.residualBeforeDegRms).toBeGreaterThan(fit.residualDegRms);
  });
});

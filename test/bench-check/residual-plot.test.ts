/**
 * check-array's residual plot and its --json rows (issue 16, item 5): measured minus expected
 * tdoa per pair and take, in microseconds. Takes made by numpy (make_takes.py: exact far-field
 * delays t_i = -p_i . u / c + skew_i by the DFT shift theorem, channel order applied),
 * independently of bearline, on the 10 cm square of interface.md. With channel 2 late by
 * 40 us, tdoa = t_b - t_a (interface.md) puts pairs (0,2) and (1,2) at +40 us and (2,3) at
 * -40 us on every take and leaves the others at 0; with channels 1 and 2 swapped the pairs
 * that hold one of them scatter with the direction while (0,3) stays at 0.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { resolveBenchCheckOptions } from '../../src/bench-check/options.js';
import { resultJson } from '../../src/bench-check/report.js';
import { tdoaPlotSvg } from '../../src/bench-check/tdoa-plot.js';
import { checkItems } from '../../src/bench-check/verdict.js';
import { tempDir } from '../helpers/temp-dir.js';
import { AROUND, fitTakes, numpyTakes, SQUARE, square } from './bench-helpers.js';

const ARTIFACTS = fileURLToPath(new URL('../.artifacts/', import.meta.url));
const base = { rate: 48000, duration_s: 1, positions_m: SQUARE };

function result(spec: typeof base & { skew_s?: number[]; order?: number[] }, name: string, dir: string) {
  const fit = fitTakes(square, numpyTakes(dir, name, spec, AROUND));
  const json = resultJson(fit, checkItems(fit, resolveBenchCheckOptions({})), { geometry: square, sampleRate: 48000, speedOfSound: 343 });
  const svg = tdoaPlotSvg(fit, `bench check of ${name}`);
  mkdirSync(ARTIFACTS, { recursive: true });
  writeFileSync(`${ARTIFACTS}check-array-${name}.svg`, svg);
  return { json, svg };
}

/** The residual dots of one pair as drawn (data-residual-us). */
function drawn(svg: string, pair: string): number[] {
  return [...svg.matchAll(new RegExp(`data-pair="${pair}" data-take="\\d+" data-residual-us="(-?[\\d.]+)"`, 'g'))].map((m) => Number(m[1]));
}

describe('check-array residuals per pair and take', () => {
  const tmp = tempDir('check-residuals');
  afterAll(() => tmp.cleanup());

  it('a 40 us late channel 2 puts its three pairs 40 us off zero on every take, the rest at zero', () => {
    const { json, svg } = result({ ...base, skew_s: [0, 0, 40e-6, 0] }, 'late-ch2', tmp.dir);
    const want: Record<string, number> = { '0-1': 0, '0-2': 40, '0-3': 0, '1-2': 40, '1-3': 0, '2-3': -40 };
    for (const r of json.pair_residuals) {
      const key = r.pair.join('-');
      expect(Math.abs(r.mean_us! - want[key]!), `${key}: ${JSON.stringify(r)}`).toBeLessThan(2);
      expect(Math.abs(r.max_abs_us! - Math.abs(want[key]!))).toBeLessThan(3);
      // The plot draws the same numbers, one dot per take.
      const dots = drawn(svg, key);
      expect(dots).toHaveLength(AROUND.length);
      for (const d of dots) expect(Math.abs(d - want[key]!)).toBeLessThan(3);
    }
    // --json carries the same per take.
    expect(json.takes[0]!.residual_tdoa_us).toHaveLength(6);
    expect(Math.abs(json.takes[3]!.residual_tdoa_us[1]! - 40)).toBeLessThan(3);
  });

  it('swapped channels 1 and 2 scatter the pairs that hold one of them, and leave (0,3) at zero', () => {
    const { json, svg } = result({ ...base, order: [0, 2, 1, 3] }, 'swap-1-2', tmp.dir);
    const byPair = new Map(json.pair_residuals.map((r) => [r.pair.join('-'), r]));
    expect(byPair.get('0-3')!.rms_us!).toBeLessThan(2);
    // Mic 1 at (0.05, 0.05) heard on channel 2 at (0.05, -0.05): up to 0.1 m / c = 292 us off.
    for (const key of ['0-1', '0-2', '1-3', '2-3']) expect(byPair.get(key)!.max_abs_us!, key).toBeGreaterThan(150);
    expect(Math.max(...drawn(svg, '0-1').map(Math.abs))).toBeGreaterThan(150);
    expect(svg).toMatch(/<g id="residuals" data-reach-us="\d+"/);
  });
});

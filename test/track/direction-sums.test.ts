/**
 * DirectionSums.merge: the directions of two slots (an older and a newer stretch of one caller)
 * merged give the same lifetime figures as all of them added to one slot. The figures are the
 * weighted circular mean and spread (Mardia and Jupp 2000) and the least-squares slope of the
 * unwrapped angle over time (a straight-line fit, common practice); the reference is the same
 * sums over one slot, so this checks the merge's bookkeeping (the time origin, the turn of the
 * circle), not the formulas.
 */
import { describe, expect, it } from 'vitest';
import { DirectionSums } from '../../src/track/direction-sums.js';
import { CONFIDENCE, HopScratch, TIME } from '../../src/track/hop-scratch.js';

interface Dir { t: number; az: number; el: number; w: number; logHz: number }

function feed(sums: DirectionSums, sc: HopScratch, slot: number, dirs: readonly Dir[]): void {
  for (const d of dirs) {
    sc.hop[TIME] = d.t;
    sc.hop[CONFIDENCE] = d.w;
    sc.candAz[0] = d.az;
    sc.candEl[0] = d.el;
    sc.candScore[0] = 1;
    sc.candLogHz[0] = d.logHz;
    sums.add(slot, 0);
  }
}

function figures(sums: DirectionSums, slot: number): number[] {
  return [sums.meanAzimuthDeg(slot), sums.spreadDeg(slot), sums.driftDegS(slot), sums.meanElevationDeg(slot)!, sums.elevationSpreadDeg(slot), sums.meanLogHz(slot, 1)];
}

/** A caller moving at `rate` deg/s from `az0`, heard in two stretches with a pause between. */
function stretches(az0: number, rate: number): [Dir[], Dir[]] {
  const at = (t: number, i: number): Dir => ({ t, az: ((az0 + rate * t + 0.7 * Math.sin(i) + 540) % 360) - 180, el: 10 + Math.cos(i), w: 0.5 + 0.4 * Math.abs(Math.sin(3 * i)), logHz: 10 + 0.1 * Math.sin(i) });
  const first = Array.from({ length: 20 }, (_, i) => at(1 + 0.01 * i, i));
  const second = Array.from({ length: 30 }, (_, i) => at(4.5 + 0.01 * i, 20 + i));
  return [first, second];
}

describe('DirectionSums.merge', () => {
  for (const [name, az0, rate, mirror] of [
    ['a still caller', 40, 0, null],
    ['a mover crossing 180 deg between the stretches', 150, 8, null],
    ['a mover on a pair (folded offsets, no wrap)', -30, 5, { kind: 'left-right', axisDeg: 0, sideDeg: 90 }],
  ] as const) {
    it(`gives the figures of one slot fed all the directions: ${name}`, () => {
      const sc = new HopScratch(1);
      const sums = new DirectionSums(3, mirror as never, sc);
      const [first, second] = stretches(az0, rate);
      feed(sums, sc, 0, [...first, ...second]);
      feed(sums, sc, 1, first);
      feed(sums, sc, 2, second);
      sums.merge(1, 2);
      const want = figures(sums, 0);
      const got = figures(sums, 2);
      for (let i = 0; i < want.length; i++) expect(got[i]).toBeCloseTo(want[i]!, 6);
      if (rate !== 0) expect(got[2]).toBeCloseTo(rate, 0);
    });
  }
});

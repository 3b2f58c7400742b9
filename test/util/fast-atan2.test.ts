import { describe, expect, it } from 'vitest';
import { fastAtan2 } from '../../src/util/fast-atan2.js';

// The polynomial atan2 against Math.atan2 (V8's port of the fdlibm routine: an outside reference).
describe('fastAtan2', () => {
  it('stays within 2e-6 rad of Math.atan2 over the whole circle and every scale', () => {
    let worst = 0;
    for (let i = 0; i < 200000; i++) {
      const a = -Math.PI + (2 * Math.PI * (i + 0.5)) / 200000;
      const r = 10 ** ((i % 13) - 6);
      const x = r * Math.cos(a);
      const y = r * Math.sin(a);
      worst = Math.max(worst, Math.abs(fastAtan2(y, x) - Math.atan2(y, x)));
    }
    console.log(`fastAtan2: largest error ${worst.toExponential(2)} rad`);
    expect(worst).toBeLessThan(2e-6);
  });

  it('matches Math.atan2 on the axes, the diagonals, zeros and non-numbers', () => {
    for (const [y, x] of [[0, 1], [1, 0], [0, -1], [-1, 0], [1, 1], [-1, -1], [1, -1], [-1, 1]] as const) {
      expect(fastAtan2(y, x)).toBeCloseTo(Math.atan2(y, x), 5);
    }
    expect(fastAtan2(0, 0)).toBe(0);
    expect(fastAtan2(3, Infinity)).toBe(0);
    expect(fastAtan2(NaN, 1)).toBeNaN();
    expect(fastAtan2(1, NaN)).toBeNaN();
  });
});

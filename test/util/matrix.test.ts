import { describe, expect, it } from 'vitest';
import { invertMatrix } from '../../src/util/matrix.js';

describe('invertMatrix (Gauss-Jordan with partial pivoting)', () => {
  // The 3 x 3 Hilbert matrix H_ij = 1 / (i + j - 1) and its exact integer inverse, a classic
  // worked example of an ill-conditioned matrix (e.g. Higham, Accuracy and Stability of
  // Numerical Algorithms, section 28.1; from memory).
  it('inverts the 3 x 3 Hilbert matrix to its known integer inverse', () => {
    const h = [1, 1 / 2, 1 / 3, 1 / 2, 1 / 3, 1 / 4, 1 / 3, 1 / 4, 1 / 5];
    const inv = invertMatrix(h, 3)!;
    const exact = [9, -36, 30, -36, 192, -180, 30, -180, 180];
    inv.forEach((v, i) => expect(v).toBeCloseTo(exact[i]!, 9));
  });

  it('needs a row swap when the first pivot is 0, and returns null for a singular matrix', () => {
    expect(invertMatrix([0, 1, 1, 0], 2)).toEqual([0, 1, 1, 0]);
    expect(invertMatrix([1, 2, 2, 4], 2)).toBeNull();
    expect(invertMatrix([1, 2, 3, 4, 5, 6, 7, 8, 9], 3)).toBeNull();
  });
});

/**
 * Small dense matrices (a few rows: normal equations of a fit), row-major in a flat array.
 */

/**
 * The inverse of an n x n matrix by Gauss-Jordan elimination with partial pivoting; null when
 * a pivot is below 1e-14 times the largest entry (singular, or too close to it).
 */
export function invertMatrix(m: readonly number[], n: number): number[] | null {
  const a = m.slice();
  const inv = new Array<number>(n * n).fill(0);
  for (let i = 0; i < n; i++) inv[i * n + i] = 1;
  const scale = Math.max(...a.map(Math.abs));
  for (let col = 0; col < n; col++) {
    let pivot = col;
    for (let r = col + 1; r < n; r++) if (Math.abs(a[r * n + col]!) > Math.abs(a[pivot * n + col]!)) pivot = r;
    const p = a[pivot * n + col]!;
    if (Math.abs(p) <= scale * 1e-14) return null;
    if (pivot !== col) {
      for (let k = 0; k < n; k++) {
        [a[col * n + k], a[pivot * n + k]] = [a[pivot * n + k]!, a[col * n + k]!];
        [inv[col * n + k], inv[pivot * n + k]] = [inv[pivot * n + k]!, inv[col * n + k]!];
      }
    }
    for (let k = 0; k < n; k++) {
      a[col * n + k] = a[col * n + k]! / p;
      inv[col * n + k] = inv[col * n + k]! / p;
    }
    for (let r = 0; r < n; r++) {
      if (r === col) continue;
      const f = a[r * n + col]!;
      if (f === 0) continue;
      for (let k = 0; k < n; k++) {
        a[r * n + k] = a[r * n + k]! - f * a[col * n + k]!;
        inv[r * n + k] = inv[r * n + k]! - f * inv[col * n + k]!;
      }
    }
  }
  return inv;
}

/**
 * Solve a x = b for a small symmetric positive semi-definite a (d = 1, 2 or 3, row-major) by
 * Cramer's rule, x written over b, with no allocation (a per-bin fit). False when a is
 * singular or nearly so: its determinant at most 1e-9 times the d-th power of its trace.
 */
export function solveSmallInPlace(a: Float64Array, b: Float64Array, d: number): boolean {
  if (d === 1) {
    if (!(a[0]! > 0)) return false;
    b[0] = b[0]! / a[0]!;
    return true;
  }
  if (d === 2) {
    const det = a[0]! * a[3]! - a[1]! * a[2]!;
    const tr = a[0]! + a[3]!;
    if (!(det > 1e-9 * tr * tr)) return false;
    const x0 = (b[0]! * a[3]! - a[1]! * b[1]!) / det;
    const x1 = (a[0]! * b[1]! - b[0]! * a[2]!) / det;
    b[0] = x0;
    b[1] = x1;
    return true;
  }
  const [a00, a01, a02, a10, a11, a12, a20, a21, a22] = [a[0]!, a[1]!, a[2]!, a[3]!, a[4]!, a[5]!, a[6]!, a[7]!, a[8]!];
  const c00 = a11 * a22 - a12 * a21;
  const c01 = a12 * a20 - a10 * a22;
  const c02 = a10 * a21 - a11 * a20;
  const det = a00 * c00 + a01 * c01 + a02 * c02;
  const tr = a00 + a11 + a22;
  if (!(det > 1e-9 * tr * tr * tr)) return false;
  const [b0, b1, b2] = [b[0]!, b[1]!, b[2]!];
  b[0] = (b0 * c00 + b1 * (a02 * a21 - a01 * a22) + b2 * (a01 * a12 - a02 * a11)) / det;
  b[1] = (b0 * c01 + b1 * (a00 * a22 - a02 * a20) + b2 * (a02 * a10 - a00 * a12)) / det;
  b[2] = (b0 * c02 + b1 * (a01 * a20 - a00 * a21) + b2 * (a00 * a11 - a01 * a10)) / det;
  return true;
}

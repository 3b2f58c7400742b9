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

/**
 * Linear least squares with uncertainties: minimise |A x - y|^2 over the columns that the data
 * determine. The normal matrix N = A^T A (columns scaled to unit norm first) is inverted by the
 * sweep operator; a column whose remaining variance, given the columns swept before it, is a
 * negligible share of its own (collinear with them) is left out and reported. The covariance
 * of x is s^2 N^-1 with s^2 = residual sum of squares / (rows - fitted columns).
 */

/** A column counts as determined when this share of its scaled norm is left after the others. */
const COLLINEAR_SHARE = 1e-9;

export interface LeastSquaresResult {
  /** Solution (0 for columns left out). */
  x: Float64Array;
  /** Covariance matrix, row-major k x k (0 rows and columns for columns left out). */
  cov: Float64Array;
  /** Which columns were left out as undetermined. */
  undetermined: boolean[];
  rss: number;
  /** Rows minus fitted columns. */
  dof: number;
  /** Residual per row (y - A x). */
  residuals: Float64Array;
}

/** `rows[i]` is row i of A (length k). */
export function solveLeastSquares(rows: readonly Float64Array[], y: Float64Array, k: number): LeastSquaresResult {
  const n = rows.length;
  const scale = new Float64Array(k);
  for (const r of rows) for (let j = 0; j < k; j++) scale[j] += r[j]! * r[j]!;
  for (let j = 0; j < k; j++) scale[j] = scale[j]! > 0 ? 1 / Math.sqrt(scale[j]!) : 0;
  // Augmented scaled normal matrix [N b; b^T yy], size (k+1)^2, swept in place.
  const m = k + 1;
  const S = new Float64Array(m * m);
  for (let i = 0; i < n; i++) {
    const r = rows[i]!;
    const yi = y[i]!;
    for (let a = 0; a < k; a++) {
      const va = r[a]! * scale[a]!;
      if (va === 0) continue;
      for (let b = a; b < k; b++) S[a * m + b] += va * r[b]! * scale[b]!;
      S[a * m + k] += va * yi;
    }
    S[k * m + k] += yi * yi;
  }
  for (let a = 0; a < m; a++) for (let b = 0; b < a; b++) S[a * m + b] = S[b * m + a]!;
  const undetermined: boolean[] = new Array<boolean>(k).fill(false);
  const swept: boolean[] = new Array<boolean>(k).fill(false);
  for (let j = 0; j < k; j++) {
    const d = S[j * m + j]!;
    // Scaled columns have unit norm, so d is the share of the column the others leave.
    if (!(d > COLLINEAR_SHARE) || scale[j] === 0) {
      undetermined[j] = true;
      continue;
    }
    sweep(S, m, j);
    swept[j] = true;
  }
  const x = new Float64Array(k);
  const cov = new Float64Array(k * k);
  const fitted = swept.filter(Boolean).length;
  const rss = Math.max(0, S[k * m + k]!);
  const dof = n - fitted;
  const s2 = dof > 0 ? rss / dof : NaN;
  for (let a = 0; a < k; a++) {
    if (!swept[a]) continue;
    x[a] = S[a * m + k]! * scale[a]!;
    for (let b = 0; b < k; b++) {
      if (!swept[b]) continue;
      // After sweeping, the swept block holds N^-1 (of the swept columns).
      cov[a * k + b] = S[a * m + b]! * s2 * scale[a]! * scale[b]!;
    }
  }
  const residuals = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const r = rows[i]!;
    let v = y[i]!;
    for (let j = 0; j < k; j++) v -= r[j]! * x[j]!;
    residuals[i] = v;
  }
  return { x, cov, undetermined, rss, dof, residuals };
}

/** The sweep operator on pivot j of a symmetric m x m matrix (Goodnight's form). */
function sweep(S: Float64Array, m: number, j: number): void {
  const d = S[j * m + j]!;
  for (let b = 0; b < m; b++) S[j * m + b] = S[j * m + b]! / d;
  for (let a = 0; a < m; a++) {
    if (a === j) continue;
    const f = S[a * m + j]!;
    if (f === 0) continue;
    for (let b = 0; b < m; b++) S[a * m + b] = S[a * m + b]! - f * S[j * m + b]!;
    S[a * m + j] = -f / d;
  }
  S[j * m + j] = 1 / d;
}

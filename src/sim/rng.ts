/**
 * A small seeded pseudo-random generator (mulberry32, a public-domain 32-bit generator):
 * the simulator is deterministic given the scene's seed. Not for cryptography.
 */
export interface Rng {
  /** Uniform in [0, 1). */
  uniform(): number;
  /** Standard normal (Box-Muller). */
  gaussian(): number;
}

export function makeRng(seed: number): Rng {
  let state = (Math.floor(seed) ^ 0x9e3779b9) >>> 0;
  let spare: number | null = null;
  const uniform = (): number => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  const gaussian = (): number => {
    if (spare !== null) {
      const s = spare;
      spare = null;
      return s;
    }
    let u = uniform();
    while (u <= 1e-300) u = uniform();
    const v = uniform();
    const r = Math.sqrt(-2 * Math.log(u));
    spare = r * Math.sin(2 * Math.PI * v);
    return r * Math.cos(2 * Math.PI * v);
  };
  return { uniform, gaussian };
}

/** A child generator for one part of the scene, so adding a source does not reshuffle the others. */
export function childRng(seed: number, part: number): Rng {
  return makeRng((Math.imul(seed | 0, 0x85ebca6b) ^ Math.imul(part + 1, 0xc2b2ae35)) >>> 0);
}

/** Entries of the inverse-CDF table of fastGaussian. */
const TABLE_SIZE = 16384;
let inverseCdf: Float64Array | null = null;

/** Inverse standard-normal CDF at u = k / TABLE_SIZE, from a cumulative trapezoid sum of the density. */
function normalTable(): Float64Array {
  if (inverseCdf) return inverseCdf;
  const step = 1e-3;
  const lo = -7;
  const n = Math.round(14 / step) + 1;
  const cdf = new Float64Array(n);
  const pdf = (x: number): number => Math.exp(-0.5 * x * x) / Math.sqrt(2 * Math.PI);
  for (let i = 1; i < n; i++) cdf[i] = cdf[i - 1]! + (0.5 * step * (pdf(lo + (i - 1) * step) + pdf(lo + i * step)));
  const total = cdf[n - 1]!;
  const t = new Float64Array(TABLE_SIZE + 1);
  let j = 0;
  for (let k = 0; k <= TABLE_SIZE; k++) {
    const u = Math.min(1 - 0.5 / TABLE_SIZE, Math.max(0.5 / TABLE_SIZE, k / TABLE_SIZE)) * total;
    while (j < n - 2 && cdf[j + 1]! < u) j++;
    const f = (u - cdf[j]!) / (cdf[j + 1]! - cdf[j]!);
    t[k] = lo + (j + f) * step;
  }
  inverseCdf = t;
  return t;
}

/**
 * A cheap near-Gaussian value for bulk noise: the inverse CDF read from a table, linear between
 * entries (tails cut at about 3.8 sigma). Several times faster than Box-Muller.
 */
export function fastGaussian(rng: Rng): number {
  const t = normalTable();
  const pos = rng.uniform() * TABLE_SIZE;
  const k = Math.floor(pos);
  return t[k]! + (pos - k) * (t[k + 1]! - t[k]!);
}

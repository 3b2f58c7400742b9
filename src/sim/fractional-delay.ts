/**
 * Band-limited fractional delay: a Kaiser-windowed sinc kernel.
 * h(x) = sinc(x) * w(x) for |x| < HALF_TAPS, w the Kaiser window (beta BETA).
 * Used to place an impulse at a non-integer sample time (room and free-field responses)
 * and to read a signal at a non-integer time (moving sources).
 * With 32 taps a side and beta 9 the delay error is far below 1 us up to 0.4 x the sample
 * rate (measured in test/sim/free-field.test.ts).
 */
export const HALF_TAPS = 32;
const BETA = 9;
/** Phases of the table per sample; values between phases are linearly interpolated. */
const PHASES = 2048;

function besselI0(x: number): number {
  let sum = 1;
  let term = 1;
  const q = (x * x) / 4;
  for (let k = 1; k < 60; k++) {
    term *= q / (k * k);
    sum += term;
    if (term < 1e-17 * sum) break;
  }
  return sum;
}

const I0_BETA = besselI0(BETA);

/** The kernel at offset x samples from its centre. */
export function kernelAt(x: number): number {
  const ax = Math.abs(x);
  if (ax >= HALF_TAPS) return 0;
  const r = ax / HALF_TAPS;
  const w = besselI0(BETA * Math.sqrt(1 - r * r)) / I0_BETA;
  if (ax < 1e-12) return w;
  const px = Math.PI * x;
  return (Math.sin(px) / px) * w;
}

/**
 * table[p * TAPS + j] = h(p / PHASES - (j - HALF_TAPS + 1)), j = 0..TAPS-1, p = 0..PHASES:
 * the taps for reading at fraction p/PHASES past sample n, applied to samples n-HALF_TAPS+1 .. n+HALF_TAPS.
 */
const TAPS = 2 * HALF_TAPS;
let table: Float64Array | null = null;
function kernelTable(): Float64Array {
  if (table) return table;
  const t = new Float64Array((PHASES + 1) * TAPS);
  for (let p = 0; p <= PHASES; p++) {
    const frac = p / PHASES;
    for (let j = 0; j < TAPS; j++) t[p * TAPS + j] = kernelAt(frac - (j - HALF_TAPS + 1));
  }
  table = t;
  return t;
}

/** Add gain * h(n - at) to out[n] for all n near `at` (a fractional sample index). */
export function addImpulse(out: Float64Array | Float32Array, at: number, gain: number): void {
  const n0 = Math.floor(at);
  for (let n = n0 - HALF_TAPS + 1; n <= n0 + HALF_TAPS; n++) {
    if (n < 0 || n >= out.length) continue;
    out[n] = out[n]! + gain * kernelAt(n - at);
  }
}

/**
 * The band-limited value of signal `s` at fractional index `at` (0 outside the signal).
 * Reads through the kernel table with linear interpolation between phases.
 */
export function readAt(s: Float32Array | Float64Array, at: number): number {
  const n0 = Math.floor(at);
  if (n0 + HALF_TAPS < 0 || n0 - HALF_TAPS + 1 >= s.length) return 0;
  const t = kernelTable();
  const pos = (at - n0) * PHASES;
  const p = Math.min(PHASES - 1, Math.floor(pos));
  const w1 = pos - p;
  const w0 = 1 - w1;
  const b0 = p * TAPS;
  const b1 = b0 + TAPS;
  let acc = 0;
  const first = n0 - HALF_TAPS + 1;
  const jStart = Math.max(0, -first);
  const jEnd = Math.min(TAPS, s.length - first);
  for (let j = jStart; j < jEnd; j++) acc += s[first + j]! * (w0 * t[b0 + j]! + w1 * t[b1 + j]!);
  return acc;
}

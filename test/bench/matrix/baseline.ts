/**
 * The plain GCC-PHAT baseline of the matrix: an independent implementation (fft.js only; no
 * import of bearline's analysis code) run per hop on the same frames as bearline's default:
 * periodic Hann window, bearline's default frame and hop, no memory across hops, no onset
 * weighting, no band voting.
 * - Per pair: the cross-spectrum divided by its magnitude (PHAT; C. H. Knapp and G. C.
 *   Carter, IEEE Trans. ASSP 24(4), 320-327, 1976) over every bin but DC and Nyquist, inverse
 *   transformed at 4x the rate (zero padding) for a finer lag grid.
 * - Two mics: the correlation's peak within the physical lag range (plus bearline's default
 *   lag margin), parabolic refinement, azimuth from the far-field delay.
 * - Three or more: SRP-PHAT (J. H. DiBiase, H. F. Silverman, M. S. Brandstein, in Microphone
 *   Arrays, Springer, 2001): the sum of the pair correlations at each direction's delays, on a
 *   grid of azimuths (and elevations for a 3-D array), 1 degree (4 degrees in 3-D), then a
 *   local search at 1/8 of that step around the best point.
 */
import FFT from 'fft.js';

export type BaselineVec = readonly [number, number, number];

export interface BaselineHop {
  readonly t: number;
  readonly az: number;
  readonly el: number | null;
  /** Delay of pair (0, 1), seconds: measured (two mics) or that of the chosen direction. */
  readonly tdoa0: number;
}

const UP = 4;
const RAD = 180 / Math.PI;

function unit(azDeg: number, elDeg: number): BaselineVec {
  const a = azDeg / RAD;
  const e = elDeg / RAD;
  return [Math.sin(a) * Math.cos(e), Math.cos(a) * Math.cos(e), Math.sin(e)];
}

function wrap(a: number): number {
  let x = (((a + 180) % 360) + 360) % 360 - 180;
  if (x === -180) x = 180;
  return x;
}

type Shape = 'pair' | 'line' | 'plane' | 'space';

function shapeOf(mics: readonly BaselineVec[]): Shape {
  if (mics.length === 2) return 'pair';
  const d = (a: BaselineVec, b: BaselineVec): BaselineVec => [a[0] - b[0], a[1] - b[1], a[2] - b[2]];
  const cr = (a: BaselineVec, b: BaselineVec): BaselineVec => [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];
  const len = (a: BaselineVec): number => Math.hypot(a[0], a[1], a[2]);
  const p0 = mics[0]!;
  const ax = d(mics[1]!, p0);
  const s = len(ax);
  let n: BaselineVec = [0, 0, 0];
  for (const q of mics) {
    const c = cr(ax, d(q, p0));
    if (len(c) > len(n)) n = c;
  }
  if (len(n) < 1e-6 * s * s) return 'line';
  const ok = mics.every((q) => Math.abs(d(q, p0)[0] * n[0] + d(q, p0)[1] * n[1] + d(q, p0)[2] * n[2]) < 1e-6 * s * len(n));
  return ok ? 'plane' : 'space';
}

/** Run the baseline over planar channels; mics in metres in the array frame (x right, y front, z up). */
export function runBaseline(
  mics: readonly BaselineVec[],
  sampleRate: number,
  speedOfSound: number,
  channels: readonly Float32Array[],
  frame: number,
  hop: number,
  lagMargin: number,
): BaselineHop[] {
  const C = channels.length;
  const n = channels[0]!.length;
  const N = frame;
  const M = UP * N;
  const fft = new FFT(N);
  const ifft = new FFT(M);
  const win = new Float64Array(N);
  for (let i = 0; i < N; i++) win[i] = 0.5 - 0.5 * Math.cos((2 * Math.PI * i) / N);
  const pairs: [number, number][] = [];
  for (let a = 0; a < C; a++) for (let b = a + 1; b < C; b++) pairs.push([a, b]);
  const base = pairs.map(([a, b]) => [mics[a]![0] - mics[b]![0], mics[a]![1] - mics[b]![1], mics[a]![2] - mics[b]![2]] as BaselineVec);
  // Lag range per pair, in upsampled samples, with two spare samples each side for interpolation.
  const lmax = base.map((b) => Math.ceil((UP * sampleRate * Math.hypot(b[0], b[1], b[2]) * (1 + lagMargin)) / speedOfSound) + 2);
  const shape = shapeOf(mics);
  const frameIn = new Float64Array(N);
  const spec = Array.from({ length: C }, () => new Float64Array(2 * N));
  const up = new Float64Array(2 * M);
  const out = new Float64Array(2 * M);
  const corr = lmax.map((L) => new Float64Array(2 * L + 1));
  // Coarse grid for 3+ mics.
  const coarseStep = shape === 'space' ? 4 : 1;
  const grid: { az: number; el: number }[] = [];
  if (shape !== 'pair') {
    const els = shape === 'space' ? Array.from({ length: Math.floor(180 / coarseStep) + 1 }, (_, i) => -90 + i * coarseStep) : [0];
    for (const el of els) {
      const azCount = Math.abs(el) === 90 ? 1 : Math.round(360 / coarseStep);
      for (let i = 0; i < azCount; i++) grid.push({ az: -180 + i * coarseStep, el });
    }
  }
  const lagOf = (p: number, u: BaselineVec): number => (UP * sampleRate * (base[p]![0] * u[0] + base[p]![1] * u[1] + base[p]![2] * u[2])) / speedOfSound;
  const gridLags = grid.map((g) => base.map((_, p) => lagOf(p, unit(g.az, g.el))));
  const power = (lags: readonly number[]): number => {
    let s = 0;
    for (let p = 0; p < lags.length; p++) {
      const L = lmax[p]!;
      const x = Math.max(-L, Math.min(L - 1e-9, lags[p]!)) + L;
      const i = Math.floor(x);
      const f = x - i;
      const r = corr[p]!;
      s += (1 - f) * r[i]! + f * r[Math.min(2 * L, i + 1)]!;
    }
    return s;
  };
  const hops: BaselineHop[] = [];
  for (let start = 0; start + N <= n; start += hop) {
    for (let c = 0; c < C; c++) {
      const x = channels[c]!;
      for (let i = 0; i < N; i++) frameIn[i] = x[start + i]! * win[i]!;
      fft.realTransform(spec[c]!, frameIn);
    }
    pairs.forEach(([a, b], p) => {
      const A = spec[a]!;
      const B = spec[b]!;
      up.fill(0);
      for (let k = 1; k < N / 2; k++) {
        const ar = A[2 * k]!;
        const ai = A[2 * k + 1]!;
        const br = B[2 * k]!;
        const bi = B[2 * k + 1]!;
        // conj(X_a) X_b: its inverse transform peaks at the lag by which b trails a (tdoa = t_b - t_a).
        const gr = ar * br + ai * bi;
        const gi = ar * bi - ai * br;
        const m = Math.hypot(gr, gi);
        if (m === 0) continue;
        up[2 * k] = gr / m;
        up[2 * k + 1] = gi / m;
        up[2 * (M - k)] = gr / m;
        up[2 * (M - k) + 1] = -gi / m;
      }
      ifft.inverseTransform(out, up);
      const L = lmax[p]!;
      const r = corr[p]!;
      for (let l = -L; l <= L; l++) r[l + L] = out[2 * ((l + M) % M)]!;
    });
    const t = (start + N / 2) / sampleRate;
    if (shape === 'pair') {
      const r = corr[0]!;
      const L = lmax[0]!;
      let best = 2;
      for (let i = 2; i <= 2 * L - 2; i++) if (r[i]! > r[best]!) best = i;
      const y0 = r[best - 1]!;
      const y1 = r[best]!;
      const y2 = r[best + 1]!;
      const den = y0 - 2 * y1 + y2;
      const delta = den < 0 ? (0.5 * (y0 - y2)) / den : 0;
      const tau = (best - L + delta) / (UP * sampleRate);
      const b = base[0]!;
      const D = Math.hypot(b[0], b[1], b[2]);
      const cosPhi = Math.max(-1, Math.min(1, (speedOfSound * tau) / D));
      const azAxis = Math.atan2(b[0], b[1]) * RAD;
      hops.push({ t, az: wrap(azAxis + Math.acos(cosPhi) * RAD), el: null, tdoa0: tau });
      continue;
    }
    let bi = 0;
    let bp = -Infinity;
    for (let g = 0; g < grid.length; g++) {
      const pw = power(gridLags[g]!);
      if (pw > bp) {
        bp = pw;
        bi = g;
      }
    }
    let { az, el } = grid[bi]!;
    const fine = coarseStep / 8;
    const c0 = { az, el };
    for (let i = -8; i <= 8; i++) {
      for (let j = shape === 'space' ? -8 : 0; j <= (shape === 'space' ? 8 : 0); j++) {
        const a2 = c0.az + i * fine;
        const e2 = Math.max(-90, Math.min(90, c0.el + j * fine));
        const pw = power(base.map((_, p) => lagOf(p, unit(a2, e2))));
        if (pw > bp) {
          bp = pw;
          az = a2;
          el = e2;
        }
      }
    }
    hops.push({ t, az: wrap(az), el: shape === 'space' ? el : null, tdoa0: lagOf(0, unit(az, el)) / (UP * sampleRate) });
  }
  return hops;
}

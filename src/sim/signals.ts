/**
 * Source signals at emission time: the call schedule and the waveform of each call.
 * Every call is scaled to RMS 1 over its whole length (pulse gaps and ramps included);
 * the source level is applied by the renderer.
 */
import { Fft, nextPow2 } from './fft.js';
import type { Rng } from './rng.js';
import type { Schedule, Signal } from './scene.js';

/** One call, in emission samples [start, end) of the scene's sample grid. */
export interface Call {
  readonly start: number;
  readonly end: number;
}

/** The calls of a schedule within a scene of `totalSamples`, on the sample grid. */
export function scheduleCalls(s: Schedule, sampleRate: number, totalSamples: number, rng: Rng): Call[] {
  const calls: Call[] = [];
  let t = s.startS;
  let count = 0;
  const length = Math.max(1, Math.round(s.lengthS * sampleRate));
  while (t < s.endS || count === 0) {
    const start = Math.round(t * sampleRate);
    if (start >= totalSamples) break;
    calls.push({ start, end: Math.min(totalSamples, start + length) });
    count++;
    let next = s.everyS + s.jitterS * (2 * rng.uniform() - 1);
    if (s.perBout !== null && count % s.perBout === 0) next += s.boutGapS;
    t += next;
  }
  return calls;
}

/** Raised-cosine fade in and out over `ramp` samples, in place. */
function applyRamps(x: Float64Array, ramp: number): void {
  const r = Math.min(ramp, Math.floor(x.length / 2));
  for (let i = 0; i < r; i++) {
    const g = 0.5 - 0.5 * Math.cos((Math.PI * (i + 0.5)) / r);
    x[i] = x[i]! * g;
    x[x.length - 1 - i] = x[x.length - 1 - i]! * g;
  }
}

function sumHarmonics(x: Float64Array, harmonics: readonly number[], phaseAt: (i: number) => number, rng: Rng): void {
  const offsets = harmonics.map(() => 2 * Math.PI * rng.uniform());
  for (let i = 0; i < x.length; i++) {
    const ph = phaseAt(i);
    let v = 0;
    for (let k = 0; k < harmonics.length; k++) {
      const a = harmonics[k]!;
      if (a > 0) v += a * Math.sin((k + 1) * ph + offsets[k]!);
    }
    x[i] = v;
  }
}

/** Gaussian noise limited to [lowHz, highHz] by zeroing FFT bins outside the band. */
function bandNoise(n: number, lowHz: number, highHz: number, sampleRate: number, rng: Rng): Float64Array {
  const size = nextPow2(Math.max(2, n));
  const fft = new Fft(size);
  const x = new Float64Array(size);
  for (let i = 0; i < size; i++) x[i] = rng.gaussian();
  const spec = fft.complex();
  fft.forwardReal(x, spec);
  for (let k = 0; k < size; k++) {
    const f = (Math.min(k, size - k) * sampleRate) / size;
    if (f < lowHz || f > highHz) {
      spec[2 * k] = 0;
      spec[2 * k + 1] = 0;
    }
  }
  const out = fft.complex();
  fft.inverse(spec, out);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) y[i] = out[2 * i]!;
  return y;
}

/** One call's waveform, `n` samples, RMS 1 (or all zero if the signal is silent there). */
export function callWaveform(signal: Signal, n: number, sampleRate: number, rampSamples: number, rng: Rng): Float64Array {
  let x: Float64Array;
  switch (signal.kind) {
    case 'noise':
      x = bandNoise(n, signal.lowHz, signal.highHz, sampleRate, rng);
      break;
    case 'tone': {
      x = new Float64Array(n);
      const w = (2 * Math.PI * signal.f0Hz) / sampleRate;
      sumHarmonics(x, signal.harmonics, (i) => w * i, rng);
      if (signal.pulseRateHz !== null) {
        const period = sampleRate / signal.pulseRateHz;
        const on = signal.pulseDuty * period;
        for (let i = 0; i < n; i++) {
          const pos = i % period;
          const g = pos < on ? Math.sin((Math.PI * pos) / on) ** 2 : 0;
          x[i] = x[i]! * g;
        }
      }
      break;
    }
    case 'sweep': {
      x = new Float64Array(n);
      const L = n / sampleRate;
      const f1 = signal.startHz;
      const f2 = signal.endHz;
      const ratio = f2 / f1;
      const phaseAt =
        signal.shape === 'linear' || Math.abs(ratio - 1) < 1e-9
          ? (i: number): number => {
              const t = i / sampleRate;
              return 2 * Math.PI * (f1 * t + ((f2 - f1) * t * t) / (2 * L));
            }
          : (i: number): number => {
              const t = i / sampleRate;
              return ((2 * Math.PI * f1 * L) / Math.log(ratio)) * (ratio ** (t / L) - 1);
            };
      sumHarmonics(x, signal.harmonics, phaseAt, rng);
      break;
    }
    case 'wav': {
      x = new Float64Array(n);
      const m = Math.min(n, signal.samples.length);
      for (let i = 0; i < m; i++) x[i] = signal.samples[i]!;
      break;
    }
  }
  applyRamps(x, rampSamples);
  let e = 0;
  for (let i = 0; i < n; i++) e += x[i]! * x[i]!;
  const rms = Math.sqrt(e / Math.max(1, n));
  if (rms > 0) for (let i = 0; i < n; i++) x[i] = x[i]! / rms;
  return x;
}

/** The whole emission signal of a source over the scene (zero between calls), times `gain`. */
export function sourceSignal(signal: Signal, calls: readonly Call[], totalSamples: number, sampleRate: number, rampS: number, gain: number, rng: Rng): Float32Array {
  const out = new Float32Array(totalSamples);
  const ramp = Math.round(rampS * sampleRate);
  for (const c of calls) {
    const w = callWaveform(signal, c.end - c.start, sampleRate, ramp, rng);
    for (let i = 0; i < w.length; i++) out[c.start + i] = out[c.start + i]! + gain * w[i]!;
  }
  return out;
}

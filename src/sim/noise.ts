/**
 * Wind-like noise and a white floor, added to every mic channel.
 * Wind: Gaussian noise through a 2nd-order Butterworth low-pass (bilinear transform, as in
 * the audio-EQ cookbook formulas; common practice, no source), a share `coherence` of it
 * common to all mics and the rest independent (so the zero-lag correlation between mics is
 * about `coherence`), scaled by a slow gust envelope exp(depth * u(t)), u a smooth unit
 * random process with knots every gust_period_s / 2. This is not a physically diffuse field
 * (no inter-mic delays); it stands in for wind buffeting, which is nearly incoherent at
 * high frequencies and partly coherent at low ones.
 */
import { fastGaussian, type Rng } from './rng.js';
import type { Noise } from './scene.js';

function lowpass(x: Float64Array, cutoffHz: number, sampleRate: number): void {
  const w0 = (2 * Math.PI * cutoffHz) / sampleRate;
  const cw = Math.cos(w0);
  const alpha = Math.sin(w0) / (2 * Math.SQRT1_2);
  const a0 = 1 + alpha;
  const b0 = (1 - cw) / 2 / a0;
  const b1 = (1 - cw) / a0;
  const b2 = b0;
  const a1 = (-2 * cw) / a0;
  const a2 = (1 - alpha) / a0;
  let x1 = 0;
  let x2 = 0;
  let y1 = 0;
  let y2 = 0;
  for (let i = 0; i < x.length; i++) {
    const x0 = x[i]!;
    const y0 = b0 * x0 + b1 * x1 + b2 * x2 - a1 * y1 - a2 * y2;
    x2 = x1;
    x1 = x0;
    y2 = y1;
    y1 = y0;
    x[i] = y0;
  }
}

function gaussianNoise(n: number, rng: Rng): Float64Array {
  const x = new Float64Array(n);
  for (let i = 0; i < n; i++) x[i] = fastGaussian(rng);
  return x;
}

/** Smooth gust envelope exp(depth * u(t)), u with cosine interpolation between Gaussian knots. */
function gustEnvelope(n: number, sampleRate: number, periodS: number, depth: number, rng: Rng): Float64Array {
  const step = Math.max(1, Math.round((periodS / 2) * sampleRate));
  const knots = Math.ceil(n / step) + 2;
  const u = Array.from({ length: knots }, () => rng.gaussian());
  const env = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const k = Math.floor(i / step);
    const f = (i - k * step) / step;
    const w = 0.5 - 0.5 * Math.cos(Math.PI * f);
    env[i] = Math.exp(depth * ((1 - w) * u[k]! + w * u[k + 1]!));
  }
  return env;
}

/** Add the scene's noise to `channels` in place. */
export function addNoise(channels: Float32Array[], noise: Noise, sampleRate: number, rng: Rng): void {
  const n = channels[0]?.length ?? 0;
  if (n === 0) return;
  if (noise.windDbfs !== null) {
    const env = gustEnvelope(n, sampleRate, noise.gustPeriodS, noise.gustDepth, rng);
    const common = gaussianNoise(n, rng);
    lowpass(common, noise.windLowpassHz, sampleRate);
    const a = Math.sqrt(noise.windCoherence);
    const b = Math.sqrt(1 - noise.windCoherence);
    const parts = channels.map(() => {
      const own = gaussianNoise(n, rng);
      lowpass(own, noise.windLowpassHz, sampleRate);
      for (let i = 0; i < n; i++) own[i] = env[i]! * (a * common[i]! + b * own[i]!);
      return own;
    });
    let e = 0;
    for (const p of parts) for (let i = 0; i < n; i++) e += p[i]! * p[i]!;
    const scale = 10 ** (noise.windDbfs / 20) / Math.sqrt(e / (n * parts.length));
    parts.forEach((p, c) => {
      const ch = channels[c]!;
      for (let i = 0; i < n; i++) ch[i] = ch[i]! + scale * p[i]!;
    });
  }
  if (noise.floorDbfs !== null) {
    const g = 10 ** (noise.floorDbfs / 20);
    for (const ch of channels) for (let i = 0; i < n; i++) ch[i] = ch[i]! + g * fastGaussian(rng);
  }
}

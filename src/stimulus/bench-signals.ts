/**
 * Test signals for the bench: an exponential (log) sine sweep, a click train, noise bursts.
 * Pure: options in, planar float channels out (the same signal on every channel).
 *
 * Log sweep from f1 to f2 over T seconds (A. Farina, "Simultaneous measurement of impulse
 * response and distortion with a swept-sine technique", AES 108th Convention, 2000):
 *   x(t) = sin( 2 pi f1 T / ln(f2/f1) * (exp(t ln(f2/f1) / T) - 1) ),
 * whose instantaneous frequency is f1 exp(t ln(f2/f1) / T).
 */
import { UsageError } from '../util/errors.js';
import type { OptionSpec } from '../options/option-spec.js';
import { makeRng } from '../sim/rng.js';

export type StimulusKind = 'sweep' | 'clicks' | 'noise';

export interface StimulusOptions {
  kind: StimulusKind;
  /** Peak level of every signal, dBFS (0 = full scale). */
  levelDbfs: number;
  /** Length of one repetition, seconds. */
  durationS: number;
  sampleRate: number;
  channels: number;
  repetitions: number;
  /** Silence before each repetition, seconds. */
  gapS: number;
  /** Sweep range, Hz (the top is capped at 0.45 x the sample rate). */
  fromHz: number;
  toHz: number;
  /** Click spacing, seconds. */
  clickIntervalS: number;
  /** Noise burst length, seconds (bursts are separated by silences as long). */
  burstS: number;
  /** Seed of the noise generator (the same seed gives the same noise). */
  seed: number;
}

export const STIMULUS_DEFAULTS: StimulusOptions = {
  kind: 'sweep',
  levelDbfs: -20,
  durationS: 3,
  sampleRate: 48000,
  channels: 1,
  repetitions: 3,
  gapS: 0.5,
  fromHz: 100,
  toHz: 16000,
  clickIntervalS: 0.25,
  burstS: 0.25,
  seed: 1,
};

/** Fade in and out of sweeps and bursts, seconds (avoids clicks at their edges). */
const FADE_S = 0.01;
/** Level above which a stimulus is refused: leaves headroom for the playback chain. */
export const MAX_LEVEL_DBFS = -1;

function num(raw: string): number {
  const n = Number(raw);
  if (raw.trim() === '' || !Number.isFinite(n)) throw new Error(`'${raw}' is not a number.`);
  return n;
}

export const stimulusOptionSpecs: readonly OptionSpec<keyof StimulusOptions>[] = [
  { key: 'kind', flag: '--kind <sweep|clicks|noise>', help: 'the test signal', defaultValue: STIMULUS_DEFAULTS.kind },
  { key: 'levelDbfs', flag: '--level <dbfs>', help: `peak level in dBFS, at most ${MAX_LEVEL_DBFS}`, defaultValue: STIMULUS_DEFAULTS.levelDbfs, parse: num },
  { key: 'durationS', flag: '--duration <s>', help: 'length of one repetition', defaultValue: STIMULUS_DEFAULTS.durationS, parse: num },
  { key: 'sampleRate', flag: '--rate <hz>', help: 'sample rate', defaultValue: STIMULUS_DEFAULTS.sampleRate, parse: num },
  { key: 'channels', flag: '--channels <n>', help: 'channels (the same signal on each)', defaultValue: STIMULUS_DEFAULTS.channels, parse: num },
  { key: 'repetitions', flag: '--repeat <n>', help: 'repetitions, each after a silence of --gap', defaultValue: STIMULUS_DEFAULTS.repetitions, parse: num },
  { key: 'gapS', flag: '--gap <s>', help: 'silence before each repetition', defaultValue: STIMULUS_DEFAULTS.gapS, parse: num },
  { key: 'fromHz', flag: '--from <hz>', help: 'sweep: start frequency', defaultValue: STIMULUS_DEFAULTS.fromHz, parse: num },
  { key: 'toHz', flag: '--to <hz>', help: 'sweep: end frequency (capped at 0.45 x rate)', defaultValue: STIMULUS_DEFAULTS.toHz, parse: num },
  { key: 'clickIntervalS', flag: '--click-interval <s>', help: 'clicks: time between clicks', defaultValue: STIMULUS_DEFAULTS.clickIntervalS, parse: num },
  { key: 'burstS', flag: '--burst <s>', help: 'noise: burst length (bursts alternate with equal silences)', defaultValue: STIMULUS_DEFAULTS.burstS, parse: num },
  { key: 'seed', flag: '--seed <n>', help: 'noise: seed of the generator', defaultValue: STIMULUS_DEFAULTS.seed, parse: num },
];

export function resolveStimulusOptions(given: Partial<StimulusOptions>): StimulusOptions {
  const o: StimulusOptions = { ...STIMULUS_DEFAULTS };
  for (const [k, v] of Object.entries(given)) if (v !== undefined) (o as unknown as Record<string, unknown>)[k] = v;
  const bad = (flag: string, what: string): never => {
    throw new UsageError(`${flag} ${what}`);
  };
  if (!['sweep', 'clicks', 'noise'].includes(o.kind)) bad('--kind', `'${o.kind}' must be sweep, clicks or noise`);
  if (!(o.levelDbfs <= MAX_LEVEL_DBFS && o.levelDbfs >= -120)) bad('--level', `${o.levelDbfs} dBFS must be from -120 to ${MAX_LEVEL_DBFS} (start low: -20 or less)`);
  if (!(o.durationS > 0 && o.durationS <= 600)) bad('--duration', `${o.durationS} s must be above 0 and at most 600`);
  if (!(Number.isInteger(o.sampleRate) && o.sampleRate >= 8000 && o.sampleRate <= 384000)) bad('--rate', `${o.sampleRate} must be a whole number of Hz from 8000 to 384000`);
  if (!(Number.isInteger(o.channels) && o.channels >= 1 && o.channels <= 8)) bad('--channels', `${o.channels} must be a whole number from 1 to 8`);
  if (!(Number.isInteger(o.repetitions) && o.repetitions >= 1 && o.repetitions <= 1000)) bad('--repeat', `${o.repetitions} must be a whole number from 1 to 1000`);
  if (!(o.gapS >= 0 && o.gapS <= 60)) bad('--gap', `${o.gapS} s must be from 0 to 60`);
  const top = 0.45 * o.sampleRate;
  if (!(o.fromHz > 0 && o.fromHz < Math.min(o.toHz, top))) bad('--from', `${o.fromHz} Hz must be above 0 and below --to (${o.toHz} Hz) and 0.45 x the rate (${top} Hz)`);
  if (!(o.clickIntervalS >= 0.001 && o.clickIntervalS <= o.durationS)) bad('--click-interval', `${o.clickIntervalS} s must be from 0.001 s to --duration`);
  if (!(o.burstS >= 0.01 && o.burstS <= o.durationS)) bad('--burst', `${o.burstS} s must be from 0.01 s to --duration`);
  if (!Number.isInteger(o.seed)) bad('--seed', `${o.seed} must be a whole number`);
  o.toHz = Math.min(o.toHz, top);
  return o;
}

function fade(x: Float32Array, start: number, end: number, n: number): void {
  for (let i = 0; i < n && start + i < end; i++) {
    const g = 0.5 - 0.5 * Math.cos((Math.PI * i) / n);
    x[start + i] *= g;
    x[end - 1 - i] *= g;
  }
}

/** One repetition of the signal at unit peak. */
export function oneRepetition(o: StimulusOptions): Float32Array {
  const fs = o.sampleRate;
  const n = Math.round(o.durationS * fs);
  const x = new Float32Array(n);
  const fadeN = Math.round(FADE_S * fs);
  if (o.kind === 'sweep') {
    const T = o.durationS;
    const L = Math.log(o.toHz / o.fromHz);
    const k = (2 * Math.PI * o.fromHz * T) / L;
    for (let i = 0; i < n; i++) x[i] = Math.sin(k * (Math.exp((i / fs / T) * L) - 1));
    fade(x, 0, n, fadeN);
  } else if (o.kind === 'clicks') {
    // A click: one period of a raised cosine, 0.5 ms long (broadband up to a few kHz and more).
    const w = Math.max(2, Math.round(0.0005 * fs));
    const step = Math.round(o.clickIntervalS * fs);
    for (let s = 0; s + w <= n; s += step) for (let i = 0; i < w; i++) x[s + i] = 0.5 - 0.5 * Math.cos((2 * Math.PI * i) / w);
  } else {
    const rng = makeRng(o.seed);
    const g = (): number => rng.gaussian();
    const burst = Math.round(o.burstS * fs);
    for (let s = 0; s < n; s += 2 * burst) {
      const e = Math.min(n, s + burst);
      for (let i = s; i < e; i++) x[i] = g();
      fade(x, s, e, Math.min(fadeN, Math.floor((e - s) / 2)));
    }
    let peak = 0;
    for (const v of x) peak = Math.max(peak, Math.abs(v));
    if (peak > 0) for (let i = 0; i < n; i++) x[i] /= peak;
  }
  return x;
}

/** The whole stimulus: repetitions, each after a gap, at the peak level, on every channel. */
export function renderStimulus(o: StimulusOptions): Float32Array[] {
  const one = oneRepetition(o);
  const gap = Math.round(o.gapS * o.sampleRate);
  const total = o.repetitions * (gap + one.length) + gap;
  const amp = 10 ** (o.levelDbfs / 20);
  const mono = new Float32Array(total);
  for (let r = 0; r < o.repetitions; r++) {
    const at = gap + r * (gap + one.length);
    for (let i = 0; i < one.length; i++) mono[at + i] = one[i]! * amp;
  }
  return Array.from({ length: o.channels }, () => mono.slice());
}

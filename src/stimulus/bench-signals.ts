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
import { choiceOption, numberOption, resolveWithSpecs, type OptionSpec } from '../options/option-spec.js';
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

const D = STIMULUS_DEFAULTS;

export const stimulusOptionSpecs: readonly OptionSpec<keyof StimulusOptions>[] = [
  choiceOption('kind', 'kind', ['sweep', 'clicks', 'noise'], D.kind, 'the test signal'),
  numberOption('levelDbfs', 'level', 'dbfs', D.levelDbfs, { min: -120, max: MAX_LEVEL_DBFS, unit: 'dBFS (start low: -20 or less)' }, `peak level in dBFS, at most ${MAX_LEVEL_DBFS}`),
  numberOption('durationS', 'duration', 's', D.durationS, { min: 0, max: 600, minExclusive: true, unit: 's' }, 'length of one repetition'),
  numberOption('sampleRate', 'rate', 'hz', D.sampleRate, { min: 8000, max: 384000, integer: true, unit: 'Hz' }, 'sample rate'),
  numberOption('channels', 'channels', 'n', D.channels, { min: 1, max: 8, integer: true }, 'channels (the same signal on each)'),
  numberOption('repetitions', 'repeat', 'n', D.repetitions, { min: 1, max: 1000, integer: true }, 'repetitions, each after a silence of --gap'),
  numberOption('gapS', 'gap', 's', D.gapS, { min: 0, max: 60, unit: 's' }, 'silence before each repetition'),
  numberOption('fromHz', 'from', 'hz', D.fromHz, { min: 0, max: 200000, minExclusive: true, unit: 'Hz' }, 'sweep: start frequency'),
  numberOption('toHz', 'to', 'hz', D.toHz, { min: 0, max: 200000, minExclusive: true, unit: 'Hz' }, 'sweep: end frequency (capped at 0.45 x rate)'),
  numberOption('clickIntervalS', 'click-interval', 's', D.clickIntervalS, { min: 0.001, max: 600, unit: 's' }, 'clicks: time between clicks'),
  numberOption('burstS', 'burst', 's', D.burstS, { min: 0.01, max: 600, unit: 's' }, 'noise: burst length (bursts alternate with equal silences)'),
  numberOption('seed', 'seed', 'n', D.seed, { min: Number.MIN_SAFE_INTEGER, max: Number.MAX_SAFE_INTEGER, integer: true }, 'noise: seed of the generator'),
];

/** Defaults filled in, every value checked, and the sweep's top capped at 0.45 x the rate. */
export function resolveStimulusOptions(given: Partial<StimulusOptions>): StimulusOptions {
  const o = resolveWithSpecs<StimulusOptions>(stimulusOptionSpecs, given, 'stimulus');
  const bad = (flag: string, what: string): never => {
    throw new UsageError(`${flag} ${what}`);
  };
  const top = 0.45 * o.sampleRate;
  if (!(o.fromHz < Math.min(o.toHz, top))) bad('--from', `${o.fromHz} Hz must be above 0 and below --to (${o.toHz} Hz) and 0.45 x the rate (${top} Hz)`);
  if (!(o.clickIntervalS <= o.durationS)) bad('--click-interval', `${o.clickIntervalS} s must be from 0.001 s to --duration`);
  if (!(o.burstS <= o.durationS)) bad('--burst', `${o.burstS} s must be from 0.01 s to --duration`);
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

/**
 * The scene file of `bearline simulate` (JSON, our own format): what the simulator renders.
 *
 * Scene frame: metres, x = east, y = north, z = up. The array sits at `array.position_m`
 * with its front (+y of the array frame) turned to `array.heading_deg` (compass degrees,
 * clockwise from north). Times are seconds from the start of the scene.
 *
 * parseScene() validates parsed JSON (every error names the field); the array geometry and
 * WAV signals are fetched through a resolver, so the parser itself does no I/O.
 * loadSceneFile() is the I/O edge.
 */
import { configsDir } from '../util/configs.js';
import { readJsonFile } from '../util/read-json-file.js';
import { dirname, isAbsolute, join } from 'node:path';
import { UsageError } from '../util/errors.js';
import type { ArrayGeometry } from '../geometry/array-geometry.js';
import { isGeometryPath, loadArrayRef } from '../geometry/array-presets.js';
import { DEFAULT_SPEED_OF_SOUND, speedOfSoundAt } from '../geometry/sound-speed.js';
import { wrap360, type Vec3 } from '../geometry/vec3.js';
import { readWavFile } from '../sources/wav-reader.js';

export interface PathPoint {
  readonly timeS: number;
  readonly position: Vec3;
}

/** Where a source is: fixed, or moving along timed points (linear between them, held before and after). */
export type Motion = { readonly kind: 'fixed'; readonly position: Vec3 } | { readonly kind: 'path'; readonly points: readonly PathPoint[] };

export type Signal =
  /** Gaussian noise bursts, band-limited to [lowHz, highHz]. */
  | { readonly kind: 'noise'; readonly lowHz: number; readonly highHz: number }
  /** A tonal call: fundamental plus harmonics (relative amplitudes, first = fundamental), optionally pulsed. */
  | { readonly kind: 'tone'; readonly f0Hz: number; readonly harmonics: readonly number[]; readonly pulseRateHz: number | null; readonly pulseDuty: number }
  /** A frequency sweep over each call, with optional harmonics. */
  | { readonly kind: 'sweep'; readonly startHz: number; readonly endHz: number; readonly shape: 'linear' | 'exponential'; readonly harmonics: readonly number[] }
  /** A recorded sound (mono, or channel 0 of the file), at the scene's sample rate. */
  | { readonly kind: 'wav'; readonly file: string; readonly samples: Float32Array };

/**
 * Source level. `spl1m`: dB SPL at 1 m from the source, mapped to samples through the scene's
 * full_scale_db_spl (the SPL whose RMS is 1.0 in the samples). `dbfsAtArray`: RMS dBFS of the
 * direct sound at the array centre (re RMS 1.0), at the source's position or, for a moving
 * source, at its closest approach.
 */
export type Level = { readonly kind: 'spl1m'; readonly db: number } | { readonly kind: 'dbfsAtArray'; readonly db: number };

/**
 * When a source calls (emission times). Calls of `lengthS` start at `startS`, one every
 * `everyS` (start to start) +- uniform `jitterS`; after `perBout` calls (when given) a pause of
 * `boutGapS`. No call starts at or after `endS`. Each call fades in and out over `rampS`.
 */
export interface Schedule {
  readonly startS: number;
  readonly endS: number;
  readonly lengthS: number;
  readonly everyS: number;
  readonly jitterS: number;
  readonly perBout: number | null;
  readonly boutGapS: number;
  readonly rampS: number;
}

export interface Source {
  readonly name: string;
  readonly motion: Motion;
  readonly signal: Signal;
  readonly level: Level;
  readonly schedule: Schedule;
}

/** Energy absorption coefficient of each wall: x = 0 (west), x = Lx (east), y = 0 (south), y = Ly (north), floor, ceiling. */
export interface WallAbsorption {
  readonly west: number;
  readonly east: number;
  readonly south: number;
  readonly north: number;
  readonly floor: number;
  readonly ceiling: number;
}
export const WALLS = ['west', 'east', 'south', 'north', 'floor', 'ceiling'] as const;

/** A shoebox room occupying [0, Lx] x [0, Ly] x [0, Lz] of the scene frame. */
export interface Room {
  readonly sizeM: Vec3;
  readonly absorption: WallAbsorption;
  /** Highest reflection order of the image sources. */
  readonly maxOrder: number;
  /** Images arriving later than this after the direct sound are left out (s). */
  readonly cutoffS: number;
  /** Highest reflection order rendered for moving sources (each image costs a per-sample pass). */
  readonly movingMaxOrder: number;
}

/**
 * Wind-like noise at every mic: Gaussian noise through a 2nd-order low-pass, with slow gusts
 * (a random log-amplitude envelope), a share `coherence` of it common to all mics (zero-lag
 * correlation coefficient between mics), the rest independent per mic. Plus an optional
 * independent white floor (mic self-noise).
 */
export interface Noise {
  readonly windDbfs: number | null;
  readonly windLowpassHz: number;
  readonly windCoherence: number;
  readonly gustPeriodS: number;
  readonly gustDepth: number;
  readonly floorDbfs: number | null;
}

export interface ArrayPlacement {
  readonly geometry: ArrayGeometry;
  /** Scene position of the array frame's origin (m). */
  readonly position: Vec3;
  /** Compass heading of the array's front; null when neither scene nor geometry gives one (then north). */
  readonly headingDeg: number | null;
  /** True when the heading came from the scene (it is then written to REC.array.json). */
  readonly headingFromScene: boolean;
}

export interface Scene {
  readonly sampleRate: number;
  readonly durationS: number;
  readonly seed: number;
  readonly speedOfSound: number;
  readonly fullScaleDbSpl: number;
  readonly array: ArrayPlacement;
  readonly sources: readonly Source[];
  readonly room: Room | null;
  readonly noise: Noise | null;
}

/** What the parser needs from outside: the array geometry and the samples of WAV signals. */
export interface SceneResolver {
  loadArray(ref: string, field: string): ArrayGeometry;
  loadWav(file: string, field: string): { sampleRate: number; samples: Float32Array };
}

export const DEFAULT_FULL_SCALE_DB_SPL = 120;
const MAX_DURATION_S = 24 * 3600;
/** Nothing is rendered above this share of the sample rate (headroom for the fractional-delay kernel). */
export const MAX_SIGNAL_FRACTION = 0.45;
/** Sources closer than this to any mic are refused (1/r would blow up). */
export const MIN_SOURCE_DISTANCE_M = 0.1;

type Json = Record<string, unknown>;

function isRecord(v: unknown): v is Json {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/** Reads one JSON object, naming fields by their path in every error. */
class FieldReader {
  constructor(
    private readonly obj: Json,
    readonly path: string,
    private readonly where: string,
    known: readonly string[],
  ) {
    for (const key of Object.keys(obj)) {
      if (!known.includes(key)) this.fail(key, `is not a known field here (known: ${known.join(', ')})`);
    }
  }

  name(key: string): string {
    return this.path === '' ? key : `${this.path}.${key}`;
  }

  fail(key: string, what: string): never {
    throw new UsageError(`${this.where}: ${this.name(key)} ${what}`);
  }

  has(key: string): boolean {
    return this.obj[key] !== undefined;
  }

  raw(key: string): unknown {
    return this.obj[key];
  }

  num(key: string, opts: { min?: number; max?: number; above?: number; integer?: boolean; unit?: string; def?: number }): number {
    const v = this.obj[key];
    const unit = opts.unit ? ` ${opts.unit}` : '';
    if (v === undefined) {
      if (opts.def !== undefined) return opts.def;
      this.fail(key, `is missing: give a number${unit}`);
    }
    if (typeof v !== 'number' || !Number.isFinite(v)) this.fail(key, `must be a number${unit}`);
    const n = v as number;
    if (opts.integer && !Number.isInteger(n)) this.fail(key, `must be a whole number (got ${n})`);
    if (opts.above !== undefined && !(n > opts.above)) this.fail(key, `must be greater than ${opts.above}${unit} (got ${n})`);
    if (opts.min !== undefined && n < opts.min) this.fail(key, `must be at least ${opts.min}${unit} (got ${n})`);
    if (opts.max !== undefined && n > opts.max) this.fail(key, `must be at most ${opts.max}${unit} (got ${n})`);
    return n;
  }

  optNum(key: string, opts: { min?: number; max?: number; above?: number; integer?: boolean; unit?: string }): number | null {
    return this.has(key) ? this.num(key, opts) : null;
  }

  str(key: string, def?: string): string {
    const v = this.obj[key];
    if (v === undefined && def !== undefined) return def;
    if (typeof v !== 'string' || v.trim() === '') this.fail(key, 'must be a non-empty string');
    return v as string;
  }

  choice<T extends string>(key: string, options: readonly T[], def: T): T {
    const v = this.str(key, def);
    if (!(options as readonly string[]).includes(v)) this.fail(key, `must be one of ${options.join(', ')} (got "${v}")`);
    return v as T;
  }

  vec3(key: string): Vec3 {
    const v = this.obj[key];
    if (!Array.isArray(v) || v.length !== 3 || !v.every((x) => typeof x === 'number' && Number.isFinite(x))) {
      this.fail(key, 'must be [east, north, up] in metres');
    }
    const a = v as number[];
    return [a[0]!, a[1]!, a[2]!];
  }

  numList(key: string, def: readonly number[]): number[] {
    const v = this.obj[key];
    if (v === undefined) return [...def];
    if (!Array.isArray(v) || v.length === 0 || v.length > 64 || !v.every((x) => typeof x === 'number' && Number.isFinite(x) && x >= 0)) {
      this.fail(key, 'must be a list of 1 to 64 relative amplitudes (numbers >= 0), the first for the fundamental');
    }
    const list = v as number[];
    if (!list.some((x) => x > 0)) this.fail(key, 'must hold at least one amplitude above zero');
    return list;
  }

  sub(key: string, known: readonly string[]): FieldReader {
    const v = this.obj[key];
    if (!isRecord(v)) this.fail(key, 'must be a JSON object');
    return new FieldReader(v as Json, this.name(key), this.where, known);
  }

  list(key: string): unknown[] {
    const v = this.obj[key];
    if (!Array.isArray(v)) this.fail(key, 'must be a list');
    return v as unknown[];
  }

  item(key: string, i: number, v: unknown, known: readonly string[]): FieldReader {
    if (!isRecord(v)) this.fail(`${key}[${i}]`, 'must be a JSON object');
    return new FieldReader(v as Json, this.name(`${key}[${i}]`), this.where, known);
  }
}

const TOP = ['description', 'sample_rate_hz', 'duration_s', 'seed', 'speed_of_sound_m_s', 'temperature_c', 'full_scale_db_spl', 'array', 'sources', 'room', 'noise'];
const ARRAY = ['geometry', 'position_m', 'heading_deg'];
const SOURCE = ['name', 'position_m', 'path', 'signal', 'level', 'calls'];
const PATH_POINT = ['time_s', 'position_m'];
const LEVEL = ['db_spl_at_1m', 'dbfs_at_array'];
const CALLS = ['start_s', 'end_s', 'length_s', 'every_s', 'jitter_s', 'per_bout', 'bout_gap_s', 'ramp_s'];
const SIGNAL: Record<Signal['kind'], readonly string[]> = {
  noise: ['type', 'low_hz', 'high_hz'],
  tone: ['type', 'f0_hz', 'harmonics', 'pulse_rate_hz', 'pulse_duty'],
  sweep: ['type', 'start_hz', 'end_hz', 'shape', 'harmonics'],
  wav: ['type', 'file'],
};
const ROOM = ['size_m', 'absorption', 'rt60_s', 'rt60_formula', 'max_order', 'cutoff_s', 'moving_max_order'];
const NOISE = ['wind_dbfs', 'wind_lowpass_hz', 'wind_coherence', 'gust_period_s', 'gust_depth', 'floor_dbfs'];

function signalKind(r: FieldReader): Signal['kind'] {
  const kinds = Object.keys(SIGNAL) as Signal['kind'][];
  const sig = r.raw('signal');
  if (!isRecord(sig)) r.fail('signal', `must be a JSON object with "type" (${kinds.join(', ')})`);
  const type = (sig as Json).type;
  if (typeof type !== 'string' || !(kinds as string[]).includes(type)) r.fail('signal.type', `must be one of ${kinds.join(', ')}`);
  return type as Signal['kind'];
}

function parseSignal(r: FieldReader, kind: Signal['kind'], rate: number, resolver: SceneResolver): Signal {
  const top = maxHz(rate);
  const checkHz = (key: string, hz: number): void => {
    if (hz > top) r.fail(key, `is ${hz} Hz, above ${MAX_SIGNAL_FRACTION} x the sample rate (${top} Hz): lower it or raise sample_rate_hz`);
  };
  switch (kind) {
    case 'noise': {
      const lowHz = r.num('low_hz', { min: 0, unit: 'Hz', def: 0 });
      const highHz = r.num('high_hz', { above: 0, unit: 'Hz', def: top });
      checkHz('high_hz', highHz);
      if (!(highHz > lowHz)) r.fail('high_hz', `must be above low_hz (${lowHz} Hz)`);
      return { kind, lowHz, highHz };
    }
    case 'tone': {
      const f0Hz = r.num('f0_hz', { above: 0, unit: 'Hz' });
      const harmonics = r.numList('harmonics', [1]);
      const highest = harmonics.reduce((k, a, i) => (a > 0 ? i + 1 : k), 1);
      if (highest * f0Hz > top) {
        r.fail('harmonics', `reach ${highest} x ${f0Hz} Hz = ${highest * f0Hz} Hz, above ${MAX_SIGNAL_FRACTION} x the sample rate (${top} Hz): drop the upper harmonics`);
      }
      const pulseRateHz = r.optNum('pulse_rate_hz', { above: 0, max: 1000, unit: 'Hz' });
      const pulseDuty = r.num('pulse_duty', { above: 0, max: 1, def: 0.5 });
      return { kind, f0Hz, harmonics, pulseRateHz, pulseDuty };
    }
    case 'sweep': {
      const startHz = r.num('start_hz', { above: 0, unit: 'Hz' });
      const endHz = r.num('end_hz', { above: 0, unit: 'Hz' });
      const harmonics = r.numList('harmonics', [1]);
      const highest = harmonics.reduce((k, a, i) => (a > 0 ? i + 1 : k), 1);
      checkHz('start_hz', startHz);
      checkHz('end_hz', endHz);
      if (highest * Math.max(startHz, endHz) > top) {
        r.fail('harmonics', `reach ${highest * Math.max(startHz, endHz)} Hz, above ${MAX_SIGNAL_FRACTION} x the sample rate (${top} Hz): drop the upper harmonics`);
      }
      const shape = r.choice('shape', ['linear', 'exponential'] as const, 'linear');
      return { kind, startHz, endHz, shape, harmonics };
    }
    case 'wav': {
      const file = r.str('file');
      const wav = resolver.loadWav(file, r.name('file'));
      if (wav.sampleRate !== rate) {
        r.fail('file', `is sampled at ${wav.sampleRate} Hz but the scene at ${rate} Hz: resample it first (e.g. sox IN.wav -r ${rate} OUT.wav)`);
      }
      if (wav.samples.length === 0) r.fail('file', 'holds no samples');
      let energy = 0;
      for (const v of wav.samples) energy += v * v;
      if (energy === 0) r.fail('file', 'holds only silence');
      return { kind, file, samples: wav.samples };
    }
  }
}

export function maxHz(rate: number): number {
  return MAX_SIGNAL_FRACTION * rate;
}

function parseSource(r: FieldReader, scene: { rate: number; durationS: number }, resolver: SceneResolver): Source {
  const name = r.str('name');
  let motion: Motion;
  if (r.has('position_m') === r.has('path')) r.fail('position_m', 'or "path" must be given, not both and not neither');
  if (r.has('position_m')) {
    motion = { kind: 'fixed', position: r.vec3('position_m') };
  } else {
    const list = r.list('path');
    if (list.length < 2) r.fail('path', 'must hold at least two {"time_s", "position_m"} points');
    const points = list.map((p, i) => {
      const pr = r.item('path', i, p, PATH_POINT);
      return { timeS: pr.num('time_s', { min: 0, unit: 's' }), position: pr.vec3('position_m') };
    });
    points.forEach((p, i) => {
      if (i > 0 && !(p.timeS > points[i - 1]!.timeS)) r.fail(`path[${i}].time_s`, 'must be later than the point before it');
    });
    motion = { kind: 'path', points };
  }
  const kind = signalKind(r);
  const signal = parseSignal(r.sub('signal', SIGNAL[kind]), kind, scene.rate, resolver);
  const lr = r.sub('level', LEVEL);
  if (lr.has('db_spl_at_1m') === lr.has('dbfs_at_array')) lr.fail('db_spl_at_1m', 'or "dbfs_at_array" must be given, one of them');
  const level: Level = lr.has('db_spl_at_1m')
    ? { kind: 'spl1m', db: lr.num('db_spl_at_1m', { min: -20, max: 200, unit: 'dB SPL' }) }
    : { kind: 'dbfsAtArray', db: lr.num('dbfs_at_array', { min: -200, max: 20, unit: 'dBFS' }) };
  const schedule = parseSchedule(r, signal, scene);
  return { name, motion, signal, level, schedule };
}

/** Calls fade in and out over this long unless `ramp_s` says otherwise, or over a quarter of a call shorter than four times it (a bat's call lasts a few ms). */
const DEFAULT_RAMP_S = 0.005;

function parseSchedule(r: FieldReader, signal: Signal, scene: { rate: number; durationS: number }): Schedule {
  const wavLength = signal.kind === 'wav' ? signal.samples.length / scene.rate : null;
  if (!r.has('calls')) {
    const lengthS = wavLength ?? scene.durationS;
    return { startS: 0, endS: 1e-9, lengthS, everyS: lengthS, jitterS: 0, perBout: null, boutGapS: 0, rampS: Math.min(DEFAULT_RAMP_S, lengthS / 4) };
  }
  const c = r.sub('calls', CALLS);
  const startS = c.num('start_s', { min: 0, unit: 's', def: 0 });
  const endS = c.num('end_s', { above: startS, unit: 's', def: scene.durationS });
  const lengthS = c.num('length_s', { above: 0, unit: 's', ...(wavLength !== null ? { def: wavLength } : {}) });
  const everyS = c.num('every_s', { above: 0, unit: 's', def: lengthS });
  const jitterS = c.num('jitter_s', { min: 0, unit: 's', def: 0 });
  if (jitterS >= everyS) c.fail('jitter_s', `must be less than every_s (${everyS} s)`);
  const perBout = c.optNum('per_bout', { min: 1, integer: true });
  const boutGapS = c.num('bout_gap_s', { min: 0, unit: 's', def: 0 });
  const rampS = c.num('ramp_s', { min: 0, unit: 's', def: Math.min(DEFAULT_RAMP_S, lengthS / 4) });
  if (2 * rampS > lengthS) c.fail('ramp_s', `${rampS} s must be at most half of length_s (${lengthS} s); give a shorter ramp_s or leave it out (default: 5 ms, or a quarter of a shorter call)`);
  return { startS, endS, lengthS, everyS, jitterS, perBout, boutGapS, rampS };
}

/** Uniform absorption that gives `rt60S` in a shoebox of `size`, by Sabine or Eyring. */
export function absorptionForRt60(size: Vec3, rt60S: number, formula: 'sabine' | 'eyring'): number {
  const [lx, ly, lz] = size;
  const volume = lx * ly * lz;
  const surface = 2 * (lx * ly + lx * lz + ly * lz);
  const x = (0.161 * volume) / (surface * rt60S);
  return formula === 'sabine' ? x : 1 - Math.exp(-x);
}

function parseRoom(r: FieldReader): Room {
  const sizeM = r.vec3('size_m');
  if (sizeM.some((v) => !(v > 0.5 && v <= 500))) r.fail('size_m', 'must be [east-west, north-south, height] lengths between 0.5 and 500 m');
  if (r.has('absorption') === r.has('rt60_s')) r.fail('absorption', 'or "rt60_s" must be given, one of them');
  let absorption: WallAbsorption;
  if (r.has('rt60_s')) {
    const rt60 = r.num('rt60_s', { above: 0, max: 20, unit: 's' });
    const formula = r.choice('rt60_formula', ['sabine', 'eyring'] as const, 'sabine');
    const alpha = absorptionForRt60(sizeM, rt60, formula);
    if (!(alpha < 1)) r.fail('rt60_s', `of ${rt60} s is too short for this room by ${formula} (it needs absorption of 1 or more): give a longer RT60`);
    absorption = { west: alpha, east: alpha, south: alpha, north: alpha, floor: alpha, ceiling: alpha };
  } else {
    if (r.has('rt60_formula')) r.fail('rt60_formula', 'only goes with "rt60_s"');
    const a = r.raw('absorption');
    if (typeof a === 'number') {
      const alpha = r.num('absorption', { min: 0, max: 1 });
      absorption = { west: alpha, east: alpha, south: alpha, north: alpha, floor: alpha, ceiling: alpha };
    } else {
      const ar = r.sub('absorption', WALLS);
      const get = (w: (typeof WALLS)[number]): number => ar.num(w, { min: 0, max: 1 });
      absorption = { west: get('west'), east: get('east'), south: get('south'), north: get('north'), floor: get('floor'), ceiling: get('ceiling') };
    }
  }
  const maxOrder = r.num('max_order', { min: 0, max: 500, integer: true, def: 30 });
  const cutoffS = r.num('cutoff_s', { above: 0, max: 20, unit: 's', def: Math.min(3, eyringRt60(sizeM, absorption)) });
  const movingMaxOrder = r.num('moving_max_order', { min: 0, max: 10, integer: true, def: 2 });
  return { sizeM, absorption, maxOrder, cutoffS, movingMaxOrder };
}

/** Eyring RT60 of a shoebox with per-wall absorption (mean alpha weighted by wall area); Infinity without absorption. */
export function eyringRt60(size: Vec3, a: WallAbsorption): number {
  const { volume, surface, areaAbsorption } = roomAreas(size, a);
  const mean = areaAbsorption / surface;
  if (mean <= 0) return Infinity;
  if (mean >= 1) return 0;
  return (0.161 * volume) / (-surface * Math.log(1 - mean));
}


function roomAreas(size: Vec3, a: WallAbsorption): { volume: number; surface: number; areaAbsorption: number } {
  const [lx, ly, lz] = size;
  const sx = ly * lz;
  const sy = lx * lz;
  const sz = lx * ly;
  const areaAbsorption = sx * (a.west + a.east) + sy * (a.south + a.north) + sz * (a.floor + a.ceiling);
  return { volume: lx * ly * lz, surface: 2 * (sx + sy + sz), areaAbsorption };
}

function parseNoise(r: FieldReader, rate: number): Noise {
  const windDbfs = r.optNum('wind_dbfs', { min: -200, max: 0, unit: 'dBFS' });
  const windLowpassHz = r.num('wind_lowpass_hz', { above: 0, max: maxHz(rate), unit: 'Hz', def: 300 });
  const windCoherence = r.num('wind_coherence', { min: 0, max: 1, def: 0.5 });
  const gustPeriodS = r.num('gust_period_s', { above: 0, max: 3600, unit: 's', def: 2 });
  const gustDepth = r.num('gust_depth', { min: 0, max: 3, def: 0.5 });
  const floorDbfs = r.optNum('floor_dbfs', { min: -200, max: 0, unit: 'dBFS' });
  if (windDbfs === null && floorDbfs === null) r.fail('wind_dbfs', 'or "floor_dbfs" must be given (or leave out "noise")');
  return { windDbfs, windLowpassHz, windCoherence, gustPeriodS, gustDepth, floorDbfs };
}

/** Validate a parsed scene file. `where` names the file in errors. */
export function parseScene(json: unknown, where: string, resolver: SceneResolver): Scene {
  if (!isRecord(json)) throw new UsageError(`${where}: the file must hold a JSON object with "sample_rate_hz", "duration_s", "array" and "sources"`);
  const r = new FieldReader(json, '', where, TOP);
  const sampleRate = r.num('sample_rate_hz', { min: 8000, max: 384000, integer: true, unit: 'Hz' });
  const durationS = r.num('duration_s', { above: 0, max: MAX_DURATION_S, unit: 's' });
  const seed = r.num('seed', { min: 0, max: 2 ** 32 - 1, integer: true, def: 1 });
  if (r.has('description')) r.str('description');
  if (r.has('speed_of_sound_m_s') && r.has('temperature_c')) r.fail('speed_of_sound_m_s', 'and "temperature_c" cannot both be given');
  let speedOfSound = DEFAULT_SPEED_OF_SOUND;
  if (r.has('speed_of_sound_m_s')) speedOfSound = r.num('speed_of_sound_m_s', { min: 200, max: 2000, unit: 'm/s' });
  if (r.has('temperature_c')) speedOfSound = speedOfSoundAt(r.num('temperature_c', { min: -100, max: 100, unit: 'C' }));
  const fullScaleDbSpl = r.num('full_scale_db_spl', { min: 40, max: 200, unit: 'dB SPL', def: DEFAULT_FULL_SCALE_DB_SPL });

  const ar = r.sub('array', ARRAY);
  const geometry = resolver.loadArray(ar.str('geometry'), ar.name('geometry'));
  const position = ar.vec3('position_m');
  const sceneHeading = ar.optNum('heading_deg', { min: -360, max: 360, unit: 'degrees' });
  const headingDeg = sceneHeading !== null ? wrap360(sceneHeading) : geometry.headingDeg;
  const array: ArrayPlacement = { geometry, position, headingDeg, headingFromScene: sceneHeading !== null };

  const list = r.list('sources');
  if (list.length === 0) r.fail('sources', 'must hold at least one source');
  const sources = list.map((s, i) => parseSource(r.item('sources', i, s, SOURCE), { rate: sampleRate, durationS }, resolver));
  const names = new Set<string>();
  sources.forEach((s, i) => {
    if (names.has(s.name)) r.fail(`sources[${i}].name`, `"${s.name}" is used twice: give each source its own name`);
    names.add(s.name);
  });
  const room = r.has('room') ? parseRoom(r.sub('room', ROOM)) : null;
  const noise = r.has('noise') ? parseNoise(r.sub('noise', NOISE), sampleRate) : null;
  const scene: Scene = { sampleRate, durationS, seed, speedOfSound, fullScaleDbSpl, array, sources, room, noise };
  checkPlacement(scene, r);
  return scene;
}

function motionPoints(m: Motion): Vec3[] {
  return m.kind === 'fixed' ? [m.position] : m.points.map((p) => p.position);
}

/** Sources keep their distance from the mics; in a room, everything stays inside it. */
function checkPlacement(scene: Scene, r: FieldReader): void {
  const mics = micScenePositions(scene.array);
  scene.sources.forEach((s, i) => {
    const field = s.motion.kind === 'fixed' ? `sources[${i}].position_m` : `sources[${i}].path`;
    for (const p of motionPoints(s.motion)) {
      for (const m of mics) {
        if (Math.hypot(p[0] - m[0], p[1] - m[1], p[2] - m[2]) < MIN_SOURCE_DISTANCE_M) {
          r.fail(field, `puts source "${s.name}" within ${MIN_SOURCE_DISTANCE_M} m of a microphone: move it further away`);
        }
      }
      if (scene.room && !inside(p, scene.room.sizeM)) r.fail(field, `puts source "${s.name}" outside the room (it spans [0, size_m] on each axis)`);
    }
  });
  if (scene.room) {
    for (const m of mics) if (!inside(m, scene.room.sizeM)) r.fail('array.position_m', 'puts a microphone outside the room (it spans [0, size_m] on each axis)');
  }
}

function inside(p: Vec3, size: Vec3): boolean {
  return p.every((v, k) => v > 0 && v < size[k]!);
}

const DEG = Math.PI / 180;

/** Scene-frame unit vectors of the array's right (+x), front (+y) and up (+z). */
export function arrayAxes(headingDeg: number | null): { right: Vec3; front: Vec3; up: Vec3 } {
  const h = (headingDeg ?? 0) * DEG;
  return { right: [Math.cos(h), -Math.sin(h), 0], front: [Math.sin(h), Math.cos(h), 0], up: [0, 0, 1] };
}

/** Scene vector (east, north, up) to the array frame (right, front, up). */
export function sceneToArrayFrame(v: Vec3, headingDeg: number | null): Vec3 {
  const { right, front } = arrayAxes(headingDeg);
  return [v[0] * right[0] + v[1] * right[1], v[0] * front[0] + v[1] * front[1], v[2]];
}

/** Scene positions of the mics, in channel order. */
export function micScenePositions(a: ArrayPlacement): Vec3[] {
  const { right, front } = arrayAxes(a.headingDeg);
  return a.geometry.mics.map((m) => {
    const [x, y, z] = m.position;
    return [a.position[0] + x * right[0] + y * front[0], a.position[1] + x * right[1] + y * front[1], a.position[2] + z] as Vec3;
  });
}

/** A loaded scene and the files it was read from (the scene, a geometry file given by path, WAV signals). */
export interface LoadedScene {
  readonly scene: Scene;
  readonly inputFiles: readonly string[];
}

/** The I/O edge: read and validate a scene file; array and WAV paths are relative to the file. */
export function loadSceneFile(path: string): LoadedScene {
  const json = readJsonFile(path, 'scene file', '--scene');
  const base = dirname(path);
  const inputFiles = [path];
  const abs = (f: string): string => (isAbsolute(f) ? f : join(base, f));
  const scene = parseScene(json, `scene file ${path}`, {
    loadArray: (ref, field) => {
      if (isGeometryPath(ref)) inputFiles.push(abs(ref));
      return loadArrayRef(ref, base, `${field} of scene file ${path}:`);
    },
    loadWav: (file) => {
      inputFiles.push(abs(file));
      const w = readWavFile(abs(file));
      return { sampleRate: w.sampleRate, samples: w.channels[0]! };
    },
  });
  return { scene, inputFiles };
}

/** The built-in demo scene shipped in configs/scenes (src/sim or dist/sim -> ../../configs/scenes). */
export function demoScenePath(): string {
  return join(configsDir(), 'scenes', 'wetland-dusk.json');
}

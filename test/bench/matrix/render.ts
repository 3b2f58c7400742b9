/**
 * Rendering a cell: the project's simulator (src/sim: free field and image-source rooms after
 * Allen and Berkley, 1979) for every cell but the dummy head, which is white noise through the
 * measured MIT KEMAR responses (assets.ts). Audio and truth go to the cache (cache.ts) under a
 * hash of the cell definition, the geometry and the generator's sources, so a cell is rendered
 * once and re-runs only analyse.
 */
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { TruthRecord } from '../../../src/accuracy/truth.js';
import type { Vec3 } from '../../../src/geometry/vec3.js';
import { convolveAddMany } from '../../../src/sim/convolve.js';
import { Fft, nextPow2 } from '../../../src/sim/fft.js';
import { renderScene } from '../../../src/sim/render.js';
import { childRng, fastGaussian } from '../../../src/sim/rng.js';
import { parseScene, type Schedule } from '../../../src/sim/scene.js';
import { scheduleCalls, sourceSignal } from '../../../src/sim/signals.js';
import { TRUTH_STEP_S, truthRecords } from '../../../src/sim/truth.js';
import { clickTrain, kemarSet, speechSamples } from './assets.js';
import { cacheDir, hashOf, readFloatWav, writeAside, writeFloatWav } from './cache.js';
import { CALL_DBFS, callLevelDbfs, type CellDef } from './corpus.js';
import { matrixGeometry } from './geometries.js';

/** Bump when the rendering changes in a way the hashed sources do not show. */
const GENERATOR_VERSION = 1;
export const SPEED_OF_SOUND = 343;
const FREE_FIELD_ARRAY_AT: Vec3 = [0, 0, 1.5];
const CALLER_RANGE_M = 6;
const RUMBLE_RANGE_M = 40;
const CALLER = 'caller';
const RUMBLE = 'rumble';

export type Role = 'call' | 'interferer';

export interface RenderedCell {
  readonly cell: CellDef;
  readonly key: string;
  readonly wavPath: string;
  readonly sampleRate: number;
  readonly channels: Float32Array[];
  /** Truth records of the simulator's format (src/sim/truth.ts), every source. */
  readonly truth: TruthRecord[];
  /** Which sources are calls (scored) and which are interferers (a rumble). */
  readonly roles: Record<string, Role>;
  readonly mics: Vec3[];
  readonly speedOfSound: number;
}

interface Meta {
  key: string;
  cell: CellDef;
  truth: TruthRecord[];
  roles: Record<string, Role>;
  mics: Vec3[];
  speedOfSound: number;
}

let generatorHash: string | null = null;

/** Hash of the generator: this folder's rendering files and the simulator's sources. */
function generator(): string {
  if (generatorHash) return generatorHash;
  const here = fileURLToPath(new URL('.', import.meta.url));
  const sim = fileURLToPath(new URL('../../../src/sim/', import.meta.url));
  const files = [join(here, 'render.ts'), join(here, 'assets.ts'), ...readdirSync(sim).filter((f) => f.endsWith('.ts')).sort().map((f) => join(sim, f))];
  generatorHash = hashOf({ v: GENERATOR_VERSION, sources: files.map((f) => readFileSync(f, 'utf8')) });
  return generatorHash;
}

/** What a cell's audio depends on: its definition (labels left out), the array and the generator. */
export function cellKey(cell: CellDef): string {
  const { id: _id, quick: _quick, condition: _condition, family: _family, split: _split, ...def } = cell;
  return hashOf({ def, mics: matrixGeometry(cell.geometry).mics.map((m) => m.position), generator: generator() });
}

function paths(key: string): { wav: string; meta: string } {
  const dir = cacheDir();
  return { wav: join(dir, `${key}.wav`), meta: join(dir, `${key}.json`) };
}

export function isRendered(cell: CellDef): boolean {
  const p = paths(cellKey(cell));
  return existsSync(p.wav) && existsSync(p.meta);
}

const DEG = Math.PI / 180;

function along(from: Vec3, azDeg: number, elDeg: number, r: number): [number, number, number] {
  const round = (x: number): number => Math.round(x * 1e6) / 1e6;
  return [
    round(from[0] + r * Math.sin(azDeg * DEG) * Math.cos(elDeg * DEG)),
    round(from[1] + r * Math.cos(azDeg * DEG) * Math.cos(elDeg * DEG)),
    round(from[2] + r * Math.sin(elDeg * DEG)),
  ];
}

function callSignal(cell: CellDef): Record<string, unknown> {
  switch (cell.call) {
    case 'clicks':
      return { type: 'wav', file: `clicks:${cell.seed}` };
    case 'band1k':
      return { type: 'noise', low_hz: 400, high_hz: 1600 };
    case 'band3k':
      return { type: 'noise', low_hz: 2000, high_hz: 4000 };
    case 'band6k':
      return { type: 'noise', low_hz: 5000, high_hz: 7000 };
    case 'harmonic':
      return { type: 'tone', f0_hz: 700, harmonics: [1, 0.7, 0.5, 0.35, 0.2] };
    case 'sweep':
      return { type: 'sweep', start_hz: 1500, end_hz: 5000, shape: 'exponential', harmonics: [1, 0.4] };
    case 'speech':
      return { type: 'wav', file: `speech:${cell.seed % 4}` };
    case 'broadband':
    case 'pink':
      throw new Error(`call ${cell.call} is for the KEMAR cells only`);
  }
}

/** The scene file (src/sim/scene.ts format) of a simulated cell. */
export function sceneOf(cell: CellDef): Record<string, unknown> {
  const arrayAt = cell.room ? cell.room.arrayAt : FREE_FIELD_ARRAY_AT;
  const callerAt = along(arrayAt, cell.azimuthDeg, cell.elevationDeg, cell.room ? cell.room.distanceM : CALLER_RANGE_M);
  const sources: Record<string, unknown>[] = [
    {
      name: CALLER,
      position_m: callerAt,
      signal: callSignal(cell),
      level: { dbfs_at_array: callLevelDbfs(cell) },
      calls: { start_s: 0.3, end_s: cell.durationS - 0.5, length_s: cell.callLengthS, every_s: cell.everyS, jitter_s: cell.jitterS, ramp_s: 0.01 },
    },
  ];
  const noise: Record<string, unknown> = { floor_dbfs: callLevelDbfs(cell) - cell.snrDb };
  const rumble = cell.rumble;
  if (rumble) {
    const total = callLevelDbfs(cell) - rumble.callOverRumbleDb;
    let range = RUMBLE_RANGE_M;
    if (cell.room) {
      // Inside the room, as far along its direction as the walls allow (less a margin).
      const { sizeM } = cell.room;
      let r = 0;
      for (;;) {
        const p = along(arrayAt, rumble.azimuthDeg, 0, r + 0.05);
        if (!(p[0] > 0.3 && p[0] < sizeM[0] - 0.3 && p[1] > 0.3 && p[1] < sizeM[1] - 0.3)) break;
        r += 0.05;
      }
      range = Math.max(0.5, 0.9 * r);
    }
    sources.push({
      name: RUMBLE,
      position_m: along(arrayAt, rumble.azimuthDeg, 0, range),
      signal: { type: 'noise', low_hz: 20, high_hz: rumble.cutoffHz },
      level: { dbfs_at_array: total + 10 * Math.log10(rumble.coherentShare) },
      calls: { start_s: 0, length_s: cell.durationS, every_s: cell.durationS + 1, ramp_s: 0.05 },
    });
    noise.wind_dbfs = total + 10 * Math.log10(1 - rumble.coherentShare);
    noise.wind_lowpass_hz = rumble.cutoffHz;
    noise.wind_coherence = 0;
  }
  const scene: Record<string, unknown> = {
    description: `accuracy matrix cell ${cell.id}: ${cell.condition}`,
    sample_rate_hz: cell.sampleRate,
    duration_s: cell.durationS,
    seed: cell.seed,
    speed_of_sound_m_s: SPEED_OF_SOUND,
    array: { geometry: cell.geometry, position_m: arrayAt, heading_deg: 0 },
    sources,
    noise,
  };
  if (cell.room) scene.room = { size_m: cell.room.sizeM, rt60_s: cell.room.rt60S };
  return scene;
}

function renderSimulated(cell: CellDef): { channels: Float32Array[]; truth: TruthRecord[] } {
  const scene = parseScene(sceneOf(cell), `matrix cell ${cell.id}`, {
    loadArray: () => matrixGeometry(cell.geometry),
    loadWav: (file) => {
      const [kind, arg] = file.split(':');
      const samples = kind === 'clicks' ? clickTrain(Number(arg), cell.sampleRate, 2) : speechSamples(Number(arg), cell.sampleRate);
      return { sampleRate: cell.sampleRate, samples };
    },
  });
  const out = renderScene(scene);
  return { channels: out.channels, truth: truthRecords(scene, out.calls) };
}

/**
 * The dummy head: white noise (100 Hz - 16 kHz) calls through the KEMAR left and right ear
 * responses of the cell's direction (ours = -SOFA azimuth; channel 0 = left ear), scaled so
 * the ears' mean level during calls is CALL_DBFS, plus an independent white floor per ear.
 * The truth follows the calls, shifted by the responses' onset (the direct sound's arrival).
 */
function renderKemar(cell: CellDef): { channels: Float32Array[]; truth: TruthRecord[] } {
  const set = kemarSet();
  const fs = set.sampleRate;
  if (fs !== cell.sampleRate) throw new Error(`the KEMAR set is sampled at ${fs} Hz, the cell at ${cell.sampleRate} Hz`);
  const sofaAz = (((-cell.azimuthDeg) % 360) + 360) % 360;
  const pair = set.irs.get(sofaAz);
  if (!pair) throw new Error(`the KEMAR set has no horizontal-plane response at SOFA azimuth ${sofaAz}`);
  const total = Math.round(cell.durationS * fs);
  const rng = childRng(cell.seed, 0);
  const schedule: Schedule = {
    startS: cell.schedule === 'steady' ? 0.2 : 0.3,
    endS: cell.durationS - 0.5,
    lengthS: cell.callLengthS,
    everyS: cell.everyS,
    jitterS: cell.jitterS,
    perBout: null,
    boutGapS: 0,
    rampS: 0.01,
  };
  const calls = scheduleCalls(schedule, fs, total, rng);
  const signal = sourceSignal({ kind: 'noise', lowHz: 100, highHz: 16000 }, calls, total, fs, schedule.rampS, 1, rng);
  if (cell.call === 'pink') pinken(signal, fs);
  const channels = [new Float32Array(total), new Float32Array(total)];
  convolveAddMany(signal, [pair[0], pair[1]], 0, channels);
  let peak = 0;
  for (const h of pair) for (const v of h) peak = Math.max(peak, Math.abs(v));
  let onset = 0;
  while (onset < pair[0].length && Math.abs(pair[0][onset]!) < 0.1 * peak && Math.abs(pair[1][onset]!) < 0.1 * peak) onset++;
  let e = 0;
  let n = 0;
  for (const c of calls) {
    for (let i = c.start + onset; i < Math.min(total, c.end + onset); i++) {
      e += channels[0]![i]! ** 2 + channels[1]![i]! ** 2;
      n += 2;
    }
  }
  const gain = 10 ** (CALL_DBFS / 20) / Math.sqrt(e / Math.max(1, n));
  const floor = 10 ** ((CALL_DBFS - cell.snrDb) / 20);
  const noiseRng = childRng(cell.seed, 1000);
  for (const ch of channels) for (let i = 0; i < total; i++) ch[i] = gain * ch[i]! + floor * fastGaussian(noiseRng);
  const truth: TruthRecord[] = [];
  const steps = Math.ceil(cell.durationS / TRUTH_STEP_S - 1e-9);
  let ci = 0;
  for (let k = 0; k < steps; k++) {
    const at = k * TRUTH_STEP_S * fs - onset;
    while (ci < calls.length && calls[ci]!.end <= at) ci++;
    const c = calls[ci];
    if (!c || at < c.start) continue;
    truth.push({ time_s: Number((k * TRUTH_STEP_S).toFixed(2)), source: CALLER, azimuth_deg: cell.azimuthDeg, elevation_deg: 0 });
  }
  return { channels, truth };
}

/**
 * Give a signal a pink spectrum (power falling as 1/f, equal power per octave, as wind, rain
 * and running water roughly have; common practice, no source): its spectrum times
 * sqrt(100 Hz / f) above 100 Hz, by one FFT over the whole signal (src/sim/fft.ts).
 */
function pinken(x: Float32Array, fs: number): void {
  const size = nextPow2(x.length);
  const fft = new Fft(size);
  const buf = new Float64Array(size);
  for (let i = 0; i < x.length; i++) buf[i] = x[i]!;
  const spec = fft.complex();
  fft.forwardReal(buf, spec);
  for (let k = 0; k < size; k++) {
    const f = (Math.min(k, size - k) * fs) / size;
    const g = f > 100 ? Math.sqrt(100 / f) : 1;
    spec[2 * k] = spec[2 * k]! * g;
    spec[2 * k + 1] = spec[2 * k + 1]! * g;
  }
  const out = fft.complex();
  fft.inverse(spec, out);
  for (let i = 0; i < x.length; i++) x[i] = out[2 * i]!;
}

/** Render a cell into the cache unless it is there; returns the seconds spent (0 when cached). */
export function ensureRendered(cell: CellDef): number {
  if (isRendered(cell)) return 0;
  const t0 = performance.now();
  const key = cellKey(cell);
  const p = paths(key);
  const out = cell.geometry === 'kemar' ? renderKemar(cell) : renderSimulated(cell);
  for (const ch of out.channels) {
    for (const v of ch) {
      if (!Number.isFinite(v) || Math.abs(v) >= 1) throw new Error(`cell ${cell.id} renders a sample of ${v}: out of range`);
    }
  }
  writeFloatWav(p.wav, cell.sampleRate, out.channels);
  const roles: Record<string, Role> = { [CALLER]: 'call' };
  if (cell.rumble) roles[RUMBLE] = 'interferer';
  const meta: Meta = { key, cell, truth: out.truth, roles, mics: matrixGeometry(cell.geometry).mics.map((m) => m.position), speedOfSound: SPEED_OF_SOUND };
  writeAside(p.meta, JSON.stringify(meta));
  return (performance.now() - t0) / 1000;
}

export function loadRendered(cell: CellDef): RenderedCell {
  const key = cellKey(cell);
  const p = paths(key);
  const meta = JSON.parse(readFileSync(p.meta, 'utf8')) as Meta;
  const wav = readFloatWav(p.wav);
  return { cell, key, wavPath: p.wav, sampleRate: wav.sampleRate, channels: wav.channels, truth: meta.truth, roles: meta.roles, mics: meta.mics, speedOfSound: meta.speedOfSound };
}

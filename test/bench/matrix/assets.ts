/**
 * Outside material of the matrix, made or read at run time and cached (never committed):
 * - speech from espeak-ng (real, non-stationary sound), trimmed and resampled by sox;
 * - the MIT KEMAR head-related impulse responses of the horizontal plane (W. G. Gardner and
 *   K. D. Martin, JASA 97(6), 3907-3908, 1995), from Debian's libmysofa1 through mysofa2json;
 * - click trains (generated here, seeded).
 */
import { execFileSync } from 'node:child_process';
import { existsSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { makeRng } from '../../../src/sim/rng.js';
import { cacheDir, hashOf, writeAside } from './cache.js';

export const SOFA_PATH = '/usr/share/libmysofa/MIT_KEMAR_normal_pinna.sofa';
const SPEECH_TEXTS = ['night heron', 'reed warbler calling', 'marsh station', 'sedge warbler'];

function run(cmd: string, args: string[], what: string): Buffer {
  try {
    return execFileSync(cmd, args, { maxBuffer: 1 << 28, stdio: ['ignore', 'pipe', 'pipe'] });
  } catch (err) {
    const e = err as NodeJS.ErrnoException & { stderr?: Buffer };
    if (e.code === 'ENOENT') throw new Error(`${cmd} is not installed: the accuracy matrix needs it for ${what} (apt-get install -y sox espeak-ng libmysofa-utils libmysofa1)`);
    throw new Error(`${cmd} failed making ${what}: ${e.stderr?.toString().trim() ?? e.message}`);
  }
}

/** One spoken phrase (chosen by `variant`), silence trimmed, at `rate`, peak-normalised, float samples. */
export function speechSamples(variant: number, rate: number): Float32Array {
  const text = SPEECH_TEXTS[variant % SPEECH_TEXTS.length]!;
  const path = join(cacheDir(), `speech-${hashOf({ text, rate, v: 1 })}.f32`);
  if (!existsSync(path)) {
    const wav = join(cacheDir(), `speech-${process.pid}.wav`);
    run('espeak-ng', ['-w', wav, text], 'speech');
    const raw = run('sox', [wav, '-t', 'raw', '-e', 'floating-point', '-b', '32', '-L', '-', 'silence', '1', '0.01', '1%', 'reverse', 'silence', '1', '0.01', '1%', 'reverse', 'rate', '-v', String(rate), 'norm', '-1'], 'speech');
    writeAside(path, raw);
    execFileSync('rm', ['-f', wav]);
  }
  const b = readFileSync(path);
  return new Float32Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.length - (b.length % 4)));
}

/** A train of broadband clicks (1 ms Hann-windowed white noise, every 4 to 8 ms), `seconds` long. */
export function clickTrain(seed: number, rate: number, seconds: number): Float32Array {
  const rng = makeRng(seed ^ 0x5eed);
  const out = new Float32Array(Math.round(seconds * rate));
  const len = Math.max(4, Math.round(0.001 * rate));
  let at = Math.round(0.002 * rate);
  while (at + len < out.length) {
    for (let i = 0; i < len; i++) out[at + i] = (0.5 - 0.5 * Math.cos((2 * Math.PI * (i + 0.5)) / len)) * rng.gaussian();
    at += Math.round((0.004 + 0.004 * rng.uniform()) * rate);
  }
  return out;
}

export interface KemarSet {
  readonly sampleRate: number;
  /** Horizontal-plane responses by SOFA azimuth (degrees, counter-clockwise from the front, 0..355): [left, right]. */
  readonly irs: ReadonlyMap<number, readonly [Float64Array, Float64Array]>;
}

let kemar: KemarSet | null = null;

/**
 * The KEMAR horizontal plane, read with mysofa2json at run time (cached as JSON beside the
 * audio, keyed by the SOFA file's size and time). SOFA's frame is x front, y left, z up,
 * azimuth counter-clockwise; receiver 0 is the left ear.
 */
export function kemarSet(): KemarSet {
  if (kemar) return kemar;
  if (!existsSync(SOFA_PATH)) throw new Error(`${SOFA_PATH} is missing: apt-get install -y libmysofa1 libmysofa-utils (the KEMAR cells read it)`);
  const st = statSync(SOFA_PATH);
  const path = join(cacheDir(), `kemar-plane-${hashOf({ size: st.size, mtime: st.mtimeMs, v: 1 })}.json`);
  if (!existsSync(path)) {
    const d = JSON.parse(run('mysofa2json', [SOFA_PATH], 'the KEMAR responses').toString('utf8')) as {
      Dimensions: { N: number; M: number };
      Variables: Record<string, { Values: number[] }>;
    };
    const v = d.Variables;
    const n = d.Dimensions.N;
    const src = v['SourcePosition']!.Values;
    const ir = v['Data.IR']!.Values;
    const rate = v['Data.SamplingRate']!.Values[0]!;
    const plane: Record<string, [number[], number[]]> = {};
    for (let m = 0; m < d.Dimensions.M; m++) {
      if (Math.abs(src[3 * m + 1]!) > 1e-6) continue;
      const az = Math.round(src[3 * m]!) % 360;
      plane[String(az)] = [ir.slice(2 * m * n, 2 * m * n + n), ir.slice((2 * m + 1) * n, (2 * m + 2) * n)];
    }
    writeAside(path, JSON.stringify({ rate, plane }));
  }
  const j = JSON.parse(readFileSync(path, 'utf8')) as { rate: number; plane: Record<string, [number[], number[]]> };
  const irs = new Map<number, readonly [Float64Array, Float64Array]>();
  for (const [az, [l, r]] of Object.entries(j.plane)) irs.set(Number(az), [Float64Array.from(l), Float64Array.from(r)]);
  kemar = { sampleRate: j.rate, irs };
  return kemar;
}

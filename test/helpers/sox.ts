/**
 * Test signals made by sox, an independent tool: the project's code plays no part in making
 * them, so a delay recovered from them checks the analysis against the outside world.
 * Fractional delays follow ../shared/references.md: synthesise at 10x the rate, delay whole
 * samples per channel, resample to the target rate.
 */
import { execFileSync } from 'node:child_process';
import { join } from 'node:path';

/**
 * The real sox, found on PATH when this module loads (recorder tests later put stand-ins named
 * sox first on PATH; they must not take the place of the real one here); null when missing.
 */
const SOX_PATH: string | null = (() => {
  try {
    return execFileSync('sh', ['-c', 'command -v sox'], { encoding: 'utf8' }).trim() || null;
  } catch {
    return null;
  }
})();

export function realSox(): string {
  if (SOX_PATH === null) throw new Error('sox is not installed: run apt-get install -y sox (the tests need it)');
  return SOX_PATH;
}

export function sox(args: string[]): Buffer {
  try {
    return execFileSync(realSox(), args, { maxBuffer: 1 << 30, stdio: ['ignore', 'pipe', 'pipe'] });
  } catch (err) {
    const e = err as NodeJS.ErrnoException & { stderr?: Buffer };
    throw new Error(`sox ${args.join(' ')} failed: ${e.stderr?.toString() ?? e.message}`);
  }
}

/** sox's own decoding of a file (any format sox reads; raw needs `inputFormat`) to interleaved 32-bit float. */
export function soxDecodeInterleaved(file: string, inputFormat: string[] = []): Float32Array {
  const out = sox([...inputFormat, file, '-t', 'raw', '-e', 'floating-point', '-b', '32', '-']);
  return new Float32Array(out.buffer.slice(out.byteOffset, out.byteOffset + out.byteLength));
}

/** One synth spec per channel, so that every channel carries a different signal. */
export function synthSpecs(channels: number): string[] {
  const kinds = ['sine 311', 'whitenoise', 'square 97', 'sine 1303', 'triangle 211', 'pinknoise', 'sawtooth 53', 'brownnoise'];
  return Array.from({ length: channels }, (_, c) => kinds[c % kinds.length]!.split(' ')).flat();
}

/** Decode any file sox reads into planar float channels (sox does the decoding). */
export function soxDecode(path: string): { rate: number; channels: Float32Array[] } {
  const info = sox(['--i', '-r', path]).toString().trim();
  const nch = Number(sox(['--i', '-c', path]).toString().trim());
  const raw = sox([path, '-t', 'raw', '-e', 'floating-point', '-b', '32', '-L', '-']);
  const f = new Float32Array(raw.buffer, raw.byteOffset, raw.length / 4);
  const frames = f.length / nch;
  const channels = Array.from({ length: nch }, () => new Float32Array(frames));
  for (let i = 0; i < frames; i++) for (let c = 0; c < nch; c++) channels[c]![i] = f[i * nch + c]!;
  return { rate: Number(info), channels };
}

export interface DelayedSignalSpec {
  /** Output path (.wav). */
  out: string;
  rate?: number;
  /** Oversampling factor for the delays. */
  up?: number;
  /** Per-channel delay in samples at rate * up. */
  delaysUp: number[];
  durationS?: number;
  /** sox synth arguments for the mono source, e.g. ['whitenoise'] or ['pinknoise']. */
  synth?: string[];
  /** A sound file to use as the mono source instead of synth (e.g. speech from espeak-ng). */
  sourceFile?: string;
  /** sox effects applied to the mono source at the high rate (e.g. a band limit). */
  effects?: string[];
  /** Gain of the source in dB (sox `gain`). */
  gainDb?: number;
  bits?: 16 | 24 | 32;
}

/** One source, delayed by a whole number of high-rate samples per channel, then resampled. */
export function soxDelayedSignal(spec: DelayedSignalSpec, workDir: string): string {
  const rate = spec.rate ?? 48000;
  const up = spec.up ?? 10;
  const hi = rate * up;
  const dur = spec.durationS ?? 2;
  const base = join(workDir, `base-${process.pid}-${Math.random().toString(36).slice(2)}.wav`);
  if (spec.sourceFile) {
    sox([spec.sourceFile, '-r', String(hi), '-c', '1', '-b', '32', '-e', 'floating-point', base, ...(spec.effects ?? []), 'gain', String(spec.gainDb ?? -6)]);
  } else {
    sox(['-R', '-n', '-r', String(hi), '-c', '1', '-b', '32', '-e', 'floating-point', base, 'synth', String(dur), ...(spec.synth ?? ['whitenoise']), ...(spec.effects ?? []), 'gain', String(spec.gainDb ?? -6)]);
  }
  const parts = spec.delaysUp.map((d, c) => {
    const p = `${base}.ch${c}.wav`;
    sox([base, '-b', '32', '-e', 'floating-point', p, 'delay', `${d}s`, 'rate', '-v', String(rate)]);
    return p;
  });
  if (parts.length === 1) sox([parts[0]!, '-b', String(spec.bits ?? 24), spec.out]);
  else sox(['-M', ...parts, '-b', String(spec.bits ?? 24), spec.out]);
  return spec.out;
}

/** Mix files sample by sample with per-file volume factors (sox -m). */
export function soxMix(out: string, inputs: { path: string; volume: number }[], bits = 24): string {
  const args = ['-m'];
  for (const i of inputs) args.push('-v', String(i.volume), i.path);
  sox([...args, '-b', String(bits), out]);
  return out;
}

/**
 * Per-mic delays (samples at rate * up, rounded) of a far-field source in unit direction u,
 * from the arrival time t_i = -p_i . u / c (interface.md), shifted so the earliest is zero.
 */
export function farFieldDelaysUp(positions: readonly (readonly number[])[], u: readonly number[], c: number, upRate: number): number[] {
  const t = positions.map((p) => -(p[0]! * u[0]! + p[1]! * u[1]! + p[2]! * u[2]!) / c);
  const t0 = Math.min(...t);
  return t.map((x) => Math.round((x - t0) * upRate));
}

/** Independent noise per channel (mic self-noise): disjoint stretches of one sox noise. */
export function soxIndependentNoise(out: string, channels: number, durationS: number, gainDb: number, workDir: string, rate = 48000): string {
  const long = join(workDir, `noise-${process.pid}-${Math.random().toString(36).slice(2)}.wav`);
  sox(['-R', '-n', '-r', String(rate), '-c', '1', '-b', '24', long, 'synth', String(channels * durationS), 'whitenoise', 'gain', String(gainDb)]);
  const parts = Array.from({ length: channels }, (_, c) => {
    const p = `${long}.ch${c}.wav`;
    sox([long, p, 'trim', String(c * durationS), String(durationS)]);
    return p;
  });
  sox(['-M', ...parts, '-b', '24', out]);
  return out;
}

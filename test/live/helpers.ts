/**
 * Helpers for the live tests: a sox-made recording of calls from a known direction, stand-in
 * recorder programs on PATH, and a listen/scan child process whose output lines the test
 * can wait for.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { chmodSync, mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll } from 'vitest';
import { BIN } from '../helpers/cli.js';
import { farFieldDelaysUp, sox, soxDelayedSignal, soxIndependentNoise, soxMix } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

export const RATE = 48_000;
export const SPACING = 0.2;
export const C = 343;
/** Bytes of one second of 2-channel s16 audio at RATE. */
export const BYTES_PER_S = RATE * 2 * 2;

/** Azimuth of a far-field source for a pair's tdoa: the formula of interface.md, azimuth = -asin(c tdoa / D). */
export function pairAzimuthDeg(tdoaS: number, spacing = SPACING, c = C): number {
  return (-Math.asin((c * tdoaS) / spacing) * 180) / Math.PI;
}

/** tdoa of a far-field source at `azDeg` for the --spacing pair: (p_a - p_b) . u / c = -D sin(az) / c (interface.md). */
export function pairTdoaS(azDeg: number, spacing = SPACING, c = C): number {
  return (-spacing * Math.sin((azDeg * Math.PI) / 180)) / c;
}

/**
 * Calls of 0.3 s every `periodS` from a far-field source at `azDeg` for the --spacing 0.2 pair
 * (mic 0 at x = -0.1, mic 1 at x = +0.1), with mic self-noise 40 dB down, made by sox:
 * fractional delays by the 10x-rate method of references.md. Returns the WAV and a raw
 * s16le copy (what a recorder would stream).
 */
export function callsRecording(dir: string, name: string, azDeg: number, seconds: number, periodS = 1): { wav: string; raw: string } {
  const az = (azDeg * Math.PI) / 180;
  const u = [Math.sin(az), Math.cos(az), 0]; // interface.md: 0 = front (+y), +90 = right (+x)
  const positions = [
    [-SPACING / 2, 0, 0],
    [SPACING / 2, 0, 0],
  ];
  const call = 0.3;
  const repeats = Math.max(1, Math.floor(seconds / periodS));
  const calls = soxDelayedSignal(
    {
      out: join(dir, `${name}-calls.wav`),
      rate: RATE,
      delaysUp: farFieldDelaysUp(positions, u, C, RATE * 10),
      durationS: call,
      effects: ['sinc', '400-5000', 'pad', '0.2', String(periodS - call - 0.2), 'repeat', String(repeats - 1)],
      gainDb: -8,
    },
    dir,
  );
  const noise = soxIndependentNoise(join(dir, `${name}-noise.wav`), 2, repeats * periodS, -50, dir, RATE);
  const wav = soxMix(join(dir, `${name}.wav`), [{ path: calls, volume: 1 }, { path: noise, volume: 1 }], 16);
  const raw = join(dir, `${name}.raw`);
  sox([wav, '-t', 'raw', '-e', 'signed-integer', '-b', '16', '-L', raw]);
  return { wav, raw };
}

/**
 * A stand-in recorder named `name` in `binDir`, put first on PATH by the test: it streams
 * `raw` in 0.1 s chunks at about real time (as a sound card would), as node-record-lpcm16
 * expects of the real program (raw audio on stdout). Run number n (counted in a file) ends
 * with `endings[n - 1]` (default: the last one), e.g. 'exit 3' or 'exec sleep 60'.
 */
export function standInRecorder(binDir: string, name: 'sox' | 'arecord', raw: string, seconds: number, endings: string[]): void {
  mkdirSync(binDir, { recursive: true });
  const chunk = BYTES_PER_S / 10;
  const cases = endings.map((e, i) => `  ${i + 1}) ${e} ;;`).join('\n');
  const script = `#!/bin/sh
PATH=/usr/bin:/bin
n=$(cat "${binDir}/${name}.runs" 2>/dev/null || echo 0)
n=$((n + 1))
echo $n > "${binDir}/${name}.runs"
i=0
while [ $i -lt ${Math.round(seconds * 10)} ]; do
  dd if="${raw}" bs=${chunk} skip=$i count=1 2>/dev/null || exit 1
  sleep 0.1
  i=$((i + 1))
done
case $n in
${cases}
  *) ${endings[endings.length - 1]} ;;
esac
`;
  const path = join(binDir, name);
  writeFileSync(path, script);
  chmodSync(path, 0o755);
}

export type LiveLine = Record<string, unknown>;

export interface LiveRun {
  readonly child: ChildProcess;
  readonly lines: LiveLine[];
  stderr(): string;
  waitFor(pred: (lines: LiveLine[], stderr: string) => boolean, what: string, timeoutMs?: number): Promise<void>;
  /** Resolves with the exit code (or the signal's name). */
  readonly exited: Promise<number | string>;
}

/** Start `bearline ARGS` with the built CLI; stdout lines are parsed as JSON. */
export function startBearline(args: string[], opts: { env?: NodeJS.ProcessEnv; cwd?: string; stdin?: 'pipe' | 'ignore' } = {}): LiveRun {
  const child = spawn(process.execPath, [BIN, ...args], { env: { ...process.env, ...opts.env }, cwd: opts.cwd, stdio: [opts.stdin ?? 'ignore', 'pipe', 'pipe'] });
  const lines: LiveLine[] = [];
  let err = '';
  let partial = '';
  const listeners = new Set<() => void>();
  const notify = (): void => listeners.forEach((l) => l());
  child.stdout!.setEncoding('utf8').on('data', (d: string) => {
    partial += d;
    const parts = partial.split('\n');
    partial = parts.pop()!;
    for (const p of parts) if (p.trim() !== '') lines.push(JSON.parse(p) as LiveLine);
    notify();
  });
  child.stderr!.setEncoding('utf8').on('data', (d: string) => {
    err += d;
    notify();
  });
  const exited = new Promise<number | string>((resolve) => child.on('exit', (code, signal) => resolve(code ?? signal ?? -1)));
  return {
    child,
    lines,
    stderr: () => err,
    exited,
    waitFor(pred, what, timeoutMs = 20_000) {
      return new Promise((resolve, reject) => {
        const check = (): void => {
          if (!pred(lines, err)) return;
          clearTimeout(timer);
          listeners.delete(check);
          resolve();
        };
        const timer = setTimeout(() => {
          listeners.delete(check);
          reject(new Error(`timed out waiting for ${what}; stderr: ${err.slice(-800)}`));
        }, timeoutMs);
        listeners.add(check);
        void exited.then(() => setTimeout(() => {
          if (listeners.has(check)) {
            listeners.delete(check);
            clearTimeout(timer);
            if (pred(lines, err)) resolve();
            else reject(new Error(`bearline exited before ${what}; stderr: ${err.slice(-800)}`));
          }
        }, 50));
        check();
      });
    },
  };
}

export const isEvent = (l: LiveLine): boolean => typeof l.track === 'number' && typeof l.start_s === 'number';
export const isFrame = (l: LiveLine): boolean => typeof l.time_s === 'number';
export const isGap = (l: LiveLine): boolean => typeof l.gap === 'string';

/** The URL listen or scan prints on stderr for --serve. */
export function feedUrlOf(stderr: string): string | null {
  const m = /\(feed (ws:\/\/[^\s)]+)\)/.exec(stderr);
  return m ? m[1]! : null;
}

export function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)]!;
}

export interface LiveFixture {
  readonly dir: string;
  /** The sox-made calls (available from beforeAll on). */
  readonly rec: { wav: string; raw: string };
  /** startBearline, with the child killed after the file's tests if it is still running. */
  start(args: string[], opts?: Parameters<typeof startBearline>[1]): LiveRun;
}

/** A temp folder with a calls recording from `azDeg` made before the file's tests; both cleaned up after them. */
export function liveFixture(prefix: string, name: string, azDeg: number, seconds: number): LiveFixture {
  const tmp = tempDir(prefix);
  const runs: LiveRun[] = [];
  let rec: { wav: string; raw: string } | null = null;
  beforeAll(() => {
    rec = callsRecording(tmp.dir, name, azDeg, seconds);
  });
  afterAll(() => {
    for (const r of runs) if (r.child.exitCode === null) r.child.kill('SIGKILL');
    tmp.cleanup();
  });
  return {
    dir: tmp.dir,
    get rec() {
      if (!rec) throw new Error('the recording is made in beforeAll');
      return rec;
    },
    start(args, opts) {
      const run = startBearline(args, opts);
      runs.push(run);
      return run;
    },
  };
}

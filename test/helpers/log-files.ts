/** Test helpers that read back what the record log wrote. */
import { spawn, type ChildProcess } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { listLogFiles, type RecordKind } from '../../src/sinks/record-log.js';

/** The station id the log driver writes under. */
export const DRIVER_STATION = 'pond-test';

export const LOG_DRIVER = fileURLToPath(new URL('./log-driver.ts', import.meta.url));

export interface DiskContents {
  files: string[];
  /** The `track` number of every event line, in file order. */
  numbers: number[];
  /** Files whose last byte is not a newline. */
  unterminated: string[];
  /** Lines that do not parse as a JSON object. */
  badLines: string[];
}

export function readEvents(dir: string, station: string, kind: RecordKind = 'events'): DiskContents {
  const out: DiskContents = { files: [], numbers: [], unterminated: [], badLines: [] };
  for (const f of listLogFiles(dir, station, kind)) {
    out.files.push(f.path);
    const text = readFileSync(f.path, 'utf8');
    if (text.length > 0 && !text.endsWith('\n')) out.unterminated.push(f.path);
    for (const line of text.split('\n')) {
      if (line === '') continue;
      try {
        out.numbers.push((JSON.parse(line) as { track: number }).track);
      } catch {
        out.badLines.push(line);
      }
    }
  }
  return out;
}

/** First index where numbers stop being 0, 1, 2, ... (or numbers.length when they never do). */
export function firstGap(numbers: readonly number[], start = 0): number {
  for (let i = 0; i < numbers.length; i++) if (numbers[i] !== start + i) return i;
  return numbers.length;
}

export interface Driver {
  child: ChildProcess;
  /** Highest N from the driver's "at N" lines so far. */
  acked(): number;
  stdout(): string;
  stderr(): string;
  /** Resolves once acked() >= n. */
  waitForAck(n: number): Promise<void>;
  exited: Promise<{ code: number | null; signal: NodeJS.Signals | null }>;
}

export function startDriver(script: string, args: string[]): Driver {
  const child = spawn(process.execPath, ['--import', 'tsx', script, ...args], { stdio: ['ignore', 'pipe', 'pipe'] });
  let out = '';
  let err = '';
  let ack = -1;
  const waiters: { n: number; resolve: () => void }[] = [];
  child.stdout!.setEncoding('utf8').on('data', (d: string) => {
    out += d;
    for (const m of d.matchAll(/^at (\d+)$/gm)) ack = Math.max(ack, Number(m[1]));
    for (let i = waiters.length - 1; i >= 0; i--) {
      if (ack >= waiters[i]!.n) waiters.splice(i, 1)[0]!.resolve();
    }
  });
  child.stderr!.setEncoding('utf8').on('data', (d: string) => (err += d));
  const exited = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((resolve) =>
    child.on('exit', (code, signal) => resolve({ code, signal })),
  );
  return {
    child,
    acked: () => ack,
    stdout: () => out,
    stderr: () => err,
    waitForAck: (n) =>
      new Promise((resolve, reject) => {
        if (ack >= n) return resolve();
        waiters.push({ n, resolve });
        void exited.then(({ code }) => reject(new Error(`driver exited (${code}) before record ${n}; stderr: ${err}`)));
      }),
    exited,
  };
}

/**
 * Where an output file goes and how it is written, decided before any work starts, so that
 * a write never destroys what was at its path:
 * - a regular file (or a new name) is written aside, as TARGET.partial-PID in the same folder,
 *   and renamed over TARGET only when complete; on any failure the partial file is deleted
 *   (abandoned) and TARGET keeps its old contents;
 * - a symbolic link is followed: its target is written aside and replaced, the link stays;
 * - a FIFO, a character device (/dev/null, a terminal) or an open descriptor (/dev/stdout,
 *   /dev/fd/N) is written straight through, opened for appending, never renamed over;
 * - a directory, a missing folder, a socket or a block device is refused (UsageError, exit 2).
 * Every command's file outputs go through here (scan, listen, locate, simulate, stimulus,
 * check-array); the station's rotating logs only ever create new files (record-log.ts).
 */
import * as fs from 'node:fs';
import { dirname, resolve } from 'node:path';
import { RuntimeFailure, UsageError } from '../util/errors.js';

export interface OutputTarget {
  /** The option that named it, for messages (e.g. "--out"). */
  readonly option: string;
  /** The path as given. */
  readonly path: string;
  /** Written straight through (FIFO, character device, open descriptor): no partial file, no rename. */
  readonly through: boolean;
  /** The file that ends up holding the output: the link's target for a symlink, else the path. */
  readonly target: string;
  /** Where the bytes go while they are written: TARGET.partial-PID, or the path itself when through. */
  readonly writePath: string;
}

/** The most symbolic links followed from one path (Linux's own limit is 40). */
const MAX_LINKS = 40;

function errCode(err: unknown): string | undefined {
  return (err as NodeJS.ErrnoException | null)?.code;
}

/**
 * Follow the symbolic links at the end of `path` (not necessarily to an existing file: a
 * dangling link names the file it will create). Returns the final path and whether the chain
 * passed through /proc or /dev/fd (an open descriptor such as /dev/stdout).
 */
function followLinks(option: string, path: string): { final: string; descriptor: boolean } {
  let p = resolve(path);
  let descriptor = false;
  for (let i = 0; i <= MAX_LINKS; i++) {
    if (p.startsWith('/proc/') || p.startsWith('/dev/fd/')) descriptor = true;
    let st: fs.Stats;
    try {
      st = fs.lstatSync(p);
    } catch (err) {
      if (errCode(err) === 'ENOENT') return { final: p, descriptor };
      throw new UsageError(`${option} ${path}: cannot use it (${(err as Error).message}); give another path`);
    }
    if (!st.isSymbolicLink()) return { final: p, descriptor };
    p = resolve(dirname(p), fs.readlinkSync(p));
  }
  throw new UsageError(`${option} ${path}: more than ${MAX_LINKS} symbolic links in a row (a loop?); give the file's real path`);
}

function realOrResolved(p: string): string {
  try {
    return fs.realpathSync(p);
  } catch {
    return resolve(p);
  }
}

/**
 * Check one output path and decide how it is written. Throws a UsageError naming the option
 * for a directory, a folder that does not exist, a folder that cannot be written, something
 * that is not a file, FIFO or character device, or a path that is one of the `inputs`.
 */
export function planOutput(option: string, path: string, inputs: readonly string[] = []): OutputTarget {
  if (path.trim() === '') throw new UsageError(`${option} is empty; give a file path`);
  let st: fs.Stats | null = null;
  try {
    st = fs.statSync(path);
  } catch (err) {
    const code = errCode(err);
    if (code === 'ENOTDIR') throw new UsageError(`${option} ${path}: a part of the path before the file name is not a folder; give another path`);
    if (code === 'ELOOP') throw new UsageError(`${option} ${path}: the symbolic links loop; give the file's real path`);
    if (code !== 'ENOENT') throw new UsageError(`${option} ${path}: cannot use it (${(err as Error).message}); give another path`);
  }
  if (st?.isDirectory()) throw new UsageError(`${option} ${path} is a directory; give the path of a file in it`);
  const { final, descriptor } = followLinks(option, path);
  if (st && (st.isFIFO() || st.isCharacterDevice() || (descriptor && st.isFile()))) {
    // Opened and written in place: nothing to set aside, nothing renamed over it.
    return { option, path, through: true, target: path, writePath: path };
  }
  if (st && !st.isFile()) throw new UsageError(`${option} ${path} is not a file, FIFO or character device (a socket or block device?); give a file path`);

  const folder = dirname(final);
  let dirStat: fs.Stats;
  try {
    dirStat = fs.statSync(folder);
  } catch {
    const named = final === resolve(path) ? '' : ` (the symbolic link points to ${final})`;
    throw new UsageError(`${option} ${path}: the folder ${folder} does not exist${named}; create it or give another path`);
  }
  if (!dirStat.isDirectory()) throw new UsageError(`${option} ${path}: ${folder} is not a folder; give another path`);
  try {
    fs.accessSync(folder, fs.constants.W_OK);
  } catch {
    throw new UsageError(`${option} ${path}: cannot write in the folder ${folder} (permission denied); give another path`);
  }
  const real = realOrResolved(final);
  for (const input of inputs) {
    if (realOrResolved(input) === real) throw new UsageError(`${option} ${path} would overwrite the input ${input}; give another path`);
  }
  return { option, path, through: false, target: final, writePath: `${final}.partial-${process.pid}` };
}

/** planOutput for several outputs that must also differ from each other. */
export function planOutputs(outputs: readonly { option: string; path: string }[], inputs: readonly string[] = []): OutputTarget[] {
  const plans = outputs.map((o) => planOutput(o.option, o.path, inputs));
  const seen = new Map<string, OutputTarget>();
  for (const p of plans) {
    if (p.through) continue;
    const key = realOrResolved(p.target);
    const other = seen.get(key);
    if (other) throw new UsageError(`${p.option} and ${other.option} name the same file ${p.path}; give two different paths`);
    seen.set(key, p);
  }
  return plans;
}

/**
 * Open an output for writing; returns the file descriptor. A partial file is created new
 * (exclusively, never through a link someone put there); a FIFO or device is opened for
 * appending (a FIFO waits here until a reader opens it).
 */
export function openOutputFd(t: OutputTarget): number {
  let fd: number;
  try {
    fd = fs.openSync(t.writePath, t.through ? 'a' : 'wx');
  } catch (err) {
    throw new RuntimeFailure(`cannot write ${t.path}: ${(err as Error).message}; nothing was changed at ${t.path}`);
  }
  if (!t.through) {
    // The replacement keeps the permissions of the file it replaces.
    try {
      fs.fchmodSync(fd, fs.statSync(t.target).mode & 0o7777);
    } catch {
      // A new file: the default permissions.
    }
  }
  return fd;
}

/** The output is complete: move the partial file over the target (nothing to do when written through). */
export function commitOutput(t: OutputTarget): void {
  if (t.through) return;
  try {
    fs.renameSync(t.writePath, t.target);
  } catch (err) {
    abandonOutput(t);
    throw new RuntimeFailure(`cannot put ${t.path} in place: ${(err as Error).message}; ${t.path} is untouched`);
  }
}

/** The output failed or was not wanted: delete the partial file; the target keeps what it held. */
export function abandonOutput(t: OutputTarget): void {
  if (t.through) return;
  try {
    fs.rmSync(t.writePath, { force: true });
  } catch {
    // Nothing more to do: the target was never touched.
  }
}

export interface OutputFile {
  readonly target: OutputTarget;
  /** The contents, whole or as consecutive chunks (e.g. a WAV header then its samples). */
  readonly data: string | Uint8Array | Iterable<Uint8Array>;
}

/**
 * Write whole files: every file aside (or straight through) first, then the partial files
 * are renamed into place. A failure abandons every partial file and leaves the targets as
 * they were (a FIFO or device written through before the failure cannot be taken back).
 */
export function writeOutputFiles(files: readonly OutputFile[]): void {
  let current: OutputFile | null = null;
  try {
    for (const f of files) {
      current = f;
      const fd = openOutputFd(f.target);
      try {
        const chunks = typeof f.data === 'string' || f.data instanceof Uint8Array ? [f.data] : f.data;
        for (const chunk of chunks) writeAll(fd, typeof chunk === 'string' ? Buffer.from(chunk, 'utf8') : chunk);
      } finally {
        fs.closeSync(fd);
      }
    }
  } catch (err) {
    for (const f of files) abandonOutput(f.target);
    if (err instanceof RuntimeFailure || err instanceof UsageError) throw err;
    throw new RuntimeFailure(`cannot write ${current?.target.path ?? 'an output'}: ${(err as Error).message}; existing files are untouched`);
  }
  for (const f of files) commitOutput(f.target);
}

function writeAll(fd: number, buf: Uint8Array): void {
  let done = 0;
  while (done < buf.length) done += fs.writeSync(fd, buf, done, buf.length - done);
}

/**
 * A folder an option names, created later when missing (--log-dir, --mqtt-queue-dir): refuse,
 * before any work, a path that exists and is not a folder, or whose nearest existing parent is
 * not a folder that can be written.
 */
export function checkFolderOption(option: string, path: string): void {
  let p = resolve(path);
  for (;;) {
    let st: fs.Stats | null = null;
    try {
      st = fs.statSync(p);
    } catch (err) {
      const code = errCode(err);
      // ENOTDIR: a file further up; the walk up finds and names it.
      if (code !== 'ENOENT' && code !== 'ENOTDIR') throw new UsageError(`${option} ${path}: cannot use it (${(err as Error).message}); give another folder`);
    }
    if (st) {
      if (!st.isDirectory()) {
        throw new UsageError(p === resolve(path) ? `${option} ${path} is a file, not a folder; give a folder` : `${option} ${path}: ${p} is not a folder; give another path`);
      }
      try {
        fs.accessSync(p, fs.constants.W_OK);
      } catch {
        throw new UsageError(`${option} ${path}: cannot write in ${p} (permission denied); give another folder`);
      }
      return;
    }
    p = dirname(p);
  }
}

/**
 * While a partial file is open, SIGINT and SIGTERM (Ctrl-C, kill) abandon it before the
 * process ends, so a stopped run leaves the target as it was and no partial file behind.
 * Exits 130 / 143 (128 + the signal's number, the shell's convention). Returns the undo.
 */
export function abandonOnSignal(t: OutputTarget): () => void {
  if (t.through) return () => undefined;
  const handlers: [NodeJS.Signals, number][] = [
    ['SIGINT', 130],
    ['SIGTERM', 143],
  ];
  const installed = handlers.map(([signal, code]) => {
    const handler = (): void => {
      abandonOutput(t);
      process.stderr.write(`bearline: stopped by ${signal}; ${t.path} was not replaced\n`);
      process.exit(code);
    };
    process.once(signal, handler);
    return [signal, handler] as const;
  });
  return () => {
    for (const [signal, handler] of installed) process.off(signal, handler);
  };
}

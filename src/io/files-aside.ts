import { existsSync, realpathSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { RuntimeFailure, UsageError } from '../errors.js';

export interface OutputFile {
  /** The option that named it, for messages (e.g. "--json"). */
  option: string;
  path: string;
  /** The contents, or a function that writes them to the path it is given (e.g. a streamed WAV). */
  data: string | Uint8Array | ((tmpPath: string) => void);
}

function real(p: string): string {
  return existsSync(p) ? realpathSync(p) : resolve(p);
}

/**
 * Check that outputs name existing folders, differ from each other and from every input
 * (nothing the user gave is overwritten). Throws a UsageError naming the option.
 */
export function checkOutputPaths(outputs: readonly { option: string; path: string }[], inputs: readonly string[]): void {
  const seen = new Map<string, string>();
  for (const o of outputs) {
    if (!existsSync(dirname(resolve(o.path)))) throw new UsageError(`${o.option} ${o.path}: the folder ${dirname(o.path)} does not exist; create it or give another path`);
    const r = real(o.path);
    for (const i of inputs) if (real(i) === r) throw new UsageError(`${o.option} ${o.path} would overwrite the input ${i}: give another path`);
    const other = seen.get(r);
    if (other) throw new UsageError(`${o.option} and ${other} name the same file ${o.path}: give two different paths`);
    seen.set(r, o.option);
  }
}

/**
 * Write every file beside its target, then rename them into place: a failure leaves the old
 * files whole and no half-written new ones.
 */
export function writeFilesAside(files: readonly OutputFile[]): void {
  const tmp = (p: string): string => `${p}.part-${process.pid}`;
  const written: string[] = [];
  try {
    for (const f of files) {
      written.push(tmp(f.path));
      if (typeof f.data === 'function') f.data(tmp(f.path));
      else writeFileSync(tmp(f.path), f.data);
    }
  } catch (err) {
    for (const w of written) rmSync(w, { force: true });
    throw new RuntimeFailure(`cannot write ${files[written.length - 1]?.path ?? 'an output'}: ${(err as Error).message}; existing files are untouched`);
  }
  for (const f of files) renameSync(tmp(f.path), f.path);
}

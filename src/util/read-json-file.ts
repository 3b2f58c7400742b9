import { readFileSync, statSync } from 'node:fs';
import { UsageError } from './errors.js';

/** Read a text file given by the user; a missing or unreadable one is a UsageError naming it. */
export function readTextFile(path: string, what: string, option: string): string {
  try {
    return readFileSync(path, 'utf8');
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    if (code === 'ENOENT') throw new UsageError(`cannot read ${what} ${path}: ${path} does not exist (no such file); check the path given to ${option}`);
    if (code === 'EISDIR') throw new UsageError(`cannot read ${what} ${path}: it is a directory; give a file to ${option}`);
    throw new UsageError(`cannot read ${what} ${path}: ${(err as Error).message}`);
  }
}

/** Largest JSON settings file read (geometry, scene, profile, stations): far above any real one. */
export const MAX_JSON_FILE_BYTES = 4 * 1024 * 1024;

/**
 * Read a JSON file given by the user. `what` names it in messages ("geometry file", "scene
 * file", ...) and `option` says where its path came from, so a missing or broken file gets one
 * clear line that says what to fix. Only a regular file of at most MAX_JSON_FILE_BYTES is read:
 * a device (/dev/zero) would grow without bound and a FIFO would wait forever.
 */
export function readJsonFile(path: string, what: string, option: string): unknown {
  const text = readSettingsText(path, what, option, 'JSON file');
  try {
    return JSON.parse(text) as unknown;
  } catch (err) {
    throw new UsageError(`${what} ${path} is not valid JSON (${(err as Error).message}): fix the file`);
  }
}

/**
 * Read a small text file of settings (JSON, a span list): only a regular file of at most
 * MAX_JSON_FILE_BYTES, else a UsageError naming it and the option it came from.
 */
export function readSettingsText(path: string, what: string, option: string, kind = 'text file'): string {
  let size: number | null = null;
  try {
    const st = statSync(path);
    if (st.isDirectory()) throw new UsageError(`cannot read ${what} ${path}: it is a directory; give a file to ${option}`);
    if (!st.isFile()) throw new UsageError(`cannot read ${what} ${path}: it is not a regular file (a device, FIFO or socket); give a ${kind} to ${option}`);
    size = st.size;
  } catch (err) {
    if (err instanceof UsageError) throw err;
    // a missing or unreadable path: readTextFile says so below
  }
  if (size !== null && size > MAX_JSON_FILE_BYTES) {
    throw new UsageError(`cannot read ${what} ${path}: it is ${(size / 1048576).toFixed(1)} MB, far larger than a ${what} can be (at most ${MAX_JSON_FILE_BYTES / 1048576} MB); check the path given to ${option}`);
  }
  return readTextFile(path, what, option);
}

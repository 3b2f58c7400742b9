import { readFileSync } from 'node:fs';
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

/**
 * Read a JSON file given by the user. `what` names it in messages ("geometry file", "scene
 * file", ...) and `option` says where its path came from, so a missing or broken file gets one
 * clear line that says what to fix.
 */
export function readJsonFile(path: string, what: string, option: string): unknown {
  const text = readTextFile(path, what, option);
  try {
    return JSON.parse(text) as unknown;
  } catch (err) {
    throw new UsageError(`${what} ${path} is not valid JSON (${(err as Error).message}): fix the file`);
  }
}

import { readFileSync } from 'node:fs';
import { UsageError } from '../errors.js';

/**
 * Read a JSON file given by the user. `what` names it in messages ("geometry file", "scene
 * file", ...) and `option` says where its path came from, so a missing or broken file gets one
 * clear line that says what to fix.
 */
export function readJsonFile(path: string, what: string, option: string): unknown {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    throw new UsageError(code === 'ENOENT' ? `${what} ${path} does not exist: check the path given to ${option}` : `cannot read ${what} ${path}: ${(err as Error).message}`);
  }
  try {
    return JSON.parse(text) as unknown;
  } catch (err) {
    throw new UsageError(`${what} ${path} is not valid JSON (${(err as Error).message}): fix the file`);
  }
}

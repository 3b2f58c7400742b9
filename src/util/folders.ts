/**
 * Folders bearline makes for its own files (log folder, MQTT queue, state folder).
 */
import * as nodeFs from 'node:fs';
import { dirname, resolve } from 'node:path';

/**
 * Make a folder and its missing parents, one level at a time. (Node's recursive mkdir loops
 * for ever where a parent exists but refuses new entries with ENOENT, as /proc does; this
 * throws the first error instead.)
 */
export function makeFolder(path: string): void {
  const missing: string[] = [];
  let p = resolve(path);
  while (!nodeFs.existsSync(p)) {
    missing.push(p);
    const up = dirname(p);
    if (up === p) break;
    p = up;
  }
  for (const dir of missing.reverse()) {
    try {
      nodeFs.mkdirSync(dir);
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code !== 'EEXIST') throw err;
    }
  }
}

/**
 * Temporary folders for tests. Every folder made here is removed when the tests of the file
 * that made it are done: importing this module registers one afterAll for that test file
 * (vitest runs each test file in its own module context). Calling cleanup() earlier is fine.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll } from 'vitest';

const made: string[] = [];

afterAll(() => {
  for (const dir of made.splice(0)) rmSync(dir, { recursive: true, force: true });
});

export interface TempDir {
  readonly dir: string;
  /** Remove the folder now (it is removed after the file's tests anyway). */
  cleanup(): void;
}

/** A fresh folder under the system's temp folder, named bearline-PREFIX-XXXXXX. */
export function tempDir(prefix = 'test'): TempDir {
  const dir = mkdtempSync(join(tmpdir(), `bearline-${prefix}-`));
  made.push(dir);
  return { dir, cleanup: () => rmSync(dir, { recursive: true, force: true }) };
}

import { spawnSync, type SpawnSyncReturns } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { expect } from 'vitest';

/** The built command line (npm test builds dist/ first). */
export const BIN = fileURLToPath(new URL('../../dist/cli/main.js', import.meta.url));

export function runCli(args: string[], opts: { input?: Buffer | string; env?: NodeJS.ProcessEnv; timeoutMs?: number; cwd?: string } = {}): SpawnSyncReturns<string> {
  return spawnSync(process.execPath, [BIN, ...args], {
    input: opts.input,
    encoding: 'utf8',
    cwd: opts.cwd,
    env: { ...process.env, ...opts.env },
    timeout: opts.timeoutMs ?? 120_000,
    maxBuffer: 1 << 28,
  });
}

/** A bad-usage or bad-input failure per interface.md: exit 2, a clear message, no stack trace. */
export function expectUsageFailure(r: SpawnSyncReturns<string>, pattern: RegExp): void {
  expect(r.stderr).toMatch(pattern);
  expect(r.status).toBe(2);
  expect(r.stderr).not.toMatch(/^\s+at .+:\d+:\d+\)?$/m);
  expect(r.stdout).toBe('');
}

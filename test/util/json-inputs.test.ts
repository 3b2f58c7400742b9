/**
 * JSON settings files given by the user (--array, --profile, --scene, --stations) are read only
 * when they are regular files of sensible size (common practice, no source): a device such as
 * /dev/zero would grow without bound, a FIFO would wait forever. Each case exits 2 at once with
 * one line naming the file and the option.
 */
import { execFileSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { MAX_JSON_FILE_BYTES } from '../../src/util/read-json-file.js';
import { runCli } from '../helpers/cli.js';
import { tempDir } from '../helpers/temp-dir.js';

const tmp = tempDir('json-inputs');

describe('JSON settings files: only regular files of sensible size', () => {
  it('a device (/dev/zero) as --array or --profile: exit 2, named', () => {
    const a = runCli(['scan', '--stdin', '--rate', '48000', '--channels', '2', '--array', '/dev/zero'], { input: Buffer.alloc(0), timeoutMs: 20_000 });
    expect(a.status).toBe(2);
    expect(a.stderr).toMatch(/geometry file \/dev\/zero: it is not a regular file.*--array/);
    const p = runCli(['scan', '--stdin', '--rate', '48000', '--channels', '2', '--spacing', '0.2', '--profile', '/dev/zero'], { input: Buffer.alloc(0), timeoutMs: 20_000 });
    expect(p.status).toBe(2);
    expect(p.stderr).toMatch(/profile \/dev\/zero: it is not a regular file.*--profile/);
  });

  it('a FIFO as --array: exit 2 without waiting for a writer', () => {
    const fifo = join(tmp.dir, 'array.fifo');
    execFileSync('mkfifo', [fifo]);
    const r = runCli(['scan', '--stdin', '--rate', '48000', '--channels', '2', '--array', fifo], { input: Buffer.alloc(0), timeoutMs: 20_000 });
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/not a regular file/);
  });

  it('a file far larger than any geometry: exit 2 with its size', () => {
    const big = join(tmp.dir, 'big.json');
    writeFileSync(big, ' '.repeat(MAX_JSON_FILE_BYTES + 1));
    const r = runCli(['scan', '--stdin', '--rate', '48000', '--channels', '2', '--array', big], { input: Buffer.alloc(0), timeoutMs: 20_000 });
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/big\.json: it is 4\.0 MB, far larger than a geometry file can be/);
  });
});

/**
 * The commands that write whole files (stimulus, simulate, check-array, locate) go through the
 * same output helper as scan: a WAV goes through a FIFO in one sequential pass (header with its
 * sizes first), read back by sox (an independent decoder); a symbolic link stays a link; a
 * directory is refused before any work.
 */
import { execFileSync, spawn } from 'node:child_process';
import { lstatSync, mkdirSync, readdirSync, readFileSync, symlinkSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { expectUsageFailure, runCli } from '../helpers/cli.js';
import { tempDir } from '../helpers/temp-dir.js';

const tmp = tempDir();
afterAll(() => tmp.cleanup());
const partials = (dir: string): string[] => readdirSync(dir).filter((f) => f.includes('.partial'));
const STIMULUS = ['stimulus', '--kind', 'noise', '--duration', '0.5', '--repeat', '1', '--rate', '16000'];

describe('whole-file outputs', () => {
  it('stimulus through a FIFO: the same bytes as the file written aside, and sox reads them', async () => {
    const dir = join(tmp.dir, 'fifo');
    mkdirSync(dir);
    const file = join(dir, 'noise.wav');
    expect(runCli([...STIMULUS, '--out', file]).status).toBe(0);
    const fifo = join(dir, 'through.wav');
    execFileSync('mkfifo', [fifo]);
    const got = join(dir, 'got.wav');
    const reader = spawn('sh', ['-c', 'cat "$0" > "$1"', fifo, got]);
    const readerDone = new Promise<number | null>((res) => reader.on('exit', res));
    const r = runCli([...STIMULUS, '--out', fifo], { timeoutMs: 30_000 });
    if (reader.exitCode === null) setTimeout(() => reader.kill(), 5000).unref();
    expect(r.status, r.stderr).toBe(0);
    expect(await readerDone).toBe(0);
    expect(readFileSync(got).equals(readFileSync(file))).toBe(true);
    expect(lstatSync(fifo).isFIFO()).toBe(true);
    // sox's own reading of the header: 16 kHz, and the samples the header promises.
    expect(execFileSync('soxi', ['-r', got]).toString().trim()).toBe('16000');
    expect(Number(execFileSync('soxi', ['-s', got]).toString().trim())).toBeGreaterThanOrEqual(8000);
    expect(partials(dir)).toEqual([]);
  });

  it('stimulus --out a symbolic link: the link stays, its target is the new WAV', () => {
    const dir = join(tmp.dir, 'link');
    mkdirSync(dir);
    writeFileSync(join(dir, 'real.wav'), 'not yet');
    symlinkSync('real.wav', join(dir, 'sweep.wav'));
    expect(runCli([...STIMULUS, '--out', join(dir, 'sweep.wav')]).status).toBe(0);
    expect(lstatSync(join(dir, 'sweep.wav')).isSymbolicLink()).toBe(true);
    expect(execFileSync('soxi', ['-r', join(dir, 'real.wav')]).toString().trim()).toBe('16000');
    expect(partials(dir)).toEqual([]);
  });

  it('check-array --json DIR and stimulus --out DIR: exit 2, naming the option', () => {
    const dir = join(tmp.dir, 'dir.wav');
    mkdirSync(dir);
    expectUsageFailure(runCli(['check-array', '--spacing', '0.2', `0=${join(tmp.dir, 'take.wav')}`, '--json', dir]), /^bearline: --json .* is a directory/);
    expectUsageFailure(runCli([...STIMULUS, '--out', dir]), /^bearline: --out .* is a directory/);
  });
});

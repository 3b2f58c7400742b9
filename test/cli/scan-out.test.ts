/**
 * scan --out keeps what was there (issue 15): a bad option leaves the old file byte for byte
 * and no partial file; a run that fails midway (a write refused by the kernel: RLIMIT_FSIZE
 * set with the shell's `ulimit -f`, POSIX) leaves the old file and no partial file; symbolic
 * links, FIFOs and /dev/null are written without being replaced. The signal is made by sox.
 */
import { spawn, spawnSync } from 'node:child_process';
import { execFileSync } from 'node:child_process';
import { lstatSync, mkdirSync, readdirSync, readFileSync, readlinkSync, symlinkSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BIN, expectUsageFailure, runCli } from '../helpers/cli.js';
import { sox, soxDelayedSignal } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

const tmp = tempDir();
let pair: string;
beforeAll(() => {
  // A 0.2 m pair, channel 1 later by 100 samples at 480 kHz, 2 s (as in scan-cli.test.ts).
  pair = soxDelayedSignal({ out: join(tmp.dir, 'pair.wav'), delaysUp: [0, 100], durationS: 2, bits: 16 }, tmp.dir);
});
afterAll(() => tmp.cleanup());

let n = 0;
/** A fresh folder with an earlier output file in it. */
function withOldFile(name = 'old.jsonl'): { dir: string; path: string; old: Buffer } {
  const dir = join(tmp.dir, `case${n++}`);
  mkdirSync(dir);
  const old = Buffer.from('{"time_s":0.5,"azimuth_deg":12.5,"note":"last night\'s records"}\n');
  const path = join(dir, name);
  writeFileSync(path, old);
  return { dir, path, old };
}
/** A character device node of the memory devices (major 1) in `dir`. */
function charDevice(dir: string, name: string, minor: number): string {
  const path = join(dir, name);
  execFileSync('mknod', ['-m', '666', path, 'c', '1', String(minor)]);
  return path;
}
const CAN_MKNOD = process.getuid?.() === 0;
const partials = (dir: string): string[] => readdirSync(dir).filter((f) => f.includes('.partial'));
const SCAN = (): string[] => ['scan', pair, '--spacing', '0.2'];

describe('scan --out: a bad option found after the input is opened changes nothing (issue 15 bug)', () => {
  it.each([
    ['tracker pair', ['--confirm-hits', '5', '--confirm-window', '3'], /--confirm-hits/],
    ['tracker levels', ['--event-enter-snr', '6', '--event-leave-snr', '12'], /--event-leave-snr 12 against --event-enter-snr 6/],
    ['analysis frame (checked against the file\'s rate)', ['--frame', '100'], /--frame/],
  ])('%s: exit 2, the old file byte for byte, no partial file', (_name, bad, named) => {
    const { dir, path, old } = withOldFile();
    const r = runCli([...SCAN(), '--out', path, ...bad]);
    expectUsageFailure(r, named);
    expect(readFileSync(path).equals(old)).toBe(true);
    expect(partials(dir)).toEqual([]);
  });
});

describe('scan --out: what the path is decides how it is written', () => {
  it('a directory: exit 2 before any work, naming the option', () => {
    const { dir } = withOldFile();
    const r = runCli([...SCAN(), '--out', dir]);
    expectUsageFailure(r, /--out .* is a directory/);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
  });

  it('a folder that does not exist: exit 2', () => {
    const { dir } = withOldFile();
    expectUsageFailure(runCli([...SCAN(), '--out', join(dir, 'no', 'such.jsonl')]), /--out .*the folder .*no does not exist/);
  });

  it('a symbolic link: the link stays, the file it points to gets the records', () => {
    const { dir, path } = withOldFile('real.jsonl');
    symlinkSync('real.jsonl', join(dir, 'link.jsonl'));
    const r = runCli([...SCAN(), '--frames', '--out', join(dir, 'link.jsonl')]);
    expect(r.status, r.stderr).toBe(0);
    expect(lstatSync(join(dir, 'link.jsonl')).isSymbolicLink()).toBe(true);
    expect(readlinkSync(join(dir, 'link.jsonl'))).toBe('real.jsonl');
    const lines = readFileSync(path, 'utf8').trim().split('\n');
    expect(lines.length).toBeGreaterThan(150);
    expect(JSON.parse(lines[0]!)).toHaveProperty('tdoa_s');
    expect(partials(dir)).toEqual([]);
  });

  it('a FIFO read by another process: the records go through it, and it stays a FIFO', async () => {
    const { dir } = withOldFile();
    const fifo = join(dir, 'records.fifo');
    execFileSync('mkfifo', [fifo]);
    const got = join(dir, 'got.jsonl');
    const reader = spawn('sh', ['-c', 'cat "$0" > "$1"', fifo, got]);
    const readerDone = new Promise<number | null>((res) => reader.on('exit', res));
    const r = spawnSync(process.execPath, [BIN, ...SCAN(), '--frames', '--out', fifo], { encoding: 'utf8', timeout: 60_000 });
    // A writer that never opens the FIFO would leave cat waiting: end it, so the test fails rather than hangs.
    if (reader.exitCode === null) setTimeout(() => reader.kill(), 5000).unref();
    expect(r.status, r.stderr).toBe(0);
    expect(await readerDone).toBe(0);
    const lines = readFileSync(got, 'utf8').trim().split('\n');
    expect(lines.length).toBeGreaterThan(150);
    expect(lstatSync(fifo).isFIFO()).toBe(true);
    expect(partials(dir)).toEqual([]);
  });

  // The devices are private nodes of the null and full devices (Linux char 1,3 and 1,7, made
  // with mknod, which needs root), never /dev/null itself: a regression would replace the node,
  // and the one in /dev is shared by every program on the machine.
  it.skipIf(!CAN_MKNOD)('the null device: written through, still the character device', () => {
    const { dir } = withOldFile();
    const dev = charDevice(dir, 'null', 3);
    const r = runCli([...SCAN(), '--frames', '--out', dev]);
    expect(r.status, r.stderr).toBe(0);
    expect(lstatSync(dev).isCharacterDevice()).toBe(true);
    expect(partials(dir)).toEqual([]);
  });

  it('a write that fails midway (file size limit): exit 1, the error named, the old file intact, no partial file', () => {
    const { dir, path, old } = withOldFile();
    // ulimit -f 8: at most 8 x 512 bytes per file; the frame records of 2 s are about 40 kB.
    const r = spawnSync('sh', ['-c', 'ulimit -f 8; exec "$@"', 'sh', process.execPath, BIN, ...SCAN(), '--frames', '--out', path], { encoding: 'utf8', timeout: 60_000 });
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/bearline: writing .*old\.jsonl failed \(EFBIG/);
    expect(r.stderr).toMatch(/was not replaced \(it keeps its old contents\)/);
    expect(r.stderr).not.toMatch(/^\s+at /m);
    expect(readFileSync(path).equals(old)).toBe(true);
    expect(partials(dir)).toEqual([]);
  });

  it.skipIf(!CAN_MKNOD)('a write error on a device (the full device) is a failure with exit 1, not a silent success', () => {
    const { dir } = withOldFile();
    const dev = charDevice(dir, 'full', 7);
    const r = runCli([...SCAN(), '--frames', '--out', dev]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/writing .*full failed \(ENOSPC/);
    expect(lstatSync(dev).isCharacterDevice()).toBe(true);
  });

  it('Ctrl-C (SIGINT) during the scan: exit 130, the old file byte for byte, no partial file', async () => {
    const { dir, path, old } = withOldFile();
    // A raw stream on stdin that stays open, so the scan is still running when the signal comes.
    const child = spawn(process.execPath, [BIN, 'scan', '--stdin', '--rate', '48000', '--channels', '2', '--spacing', '0.2', '--frames', '--out', path], { stdio: ['pipe', 'pipe', 'pipe'] });
    let stderr = '';
    child.stderr.setEncoding('utf8').on('data', (d: string) => (stderr += d));
    const exited = new Promise<number | null>((res) => child.on('exit', (code) => res(code)));
    child.stdin.write(sox([pair, '-t', 'raw', '-e', 'signed-integer', '-b', '16', '-L', '-']));
    // Wait (up to 30 s on a loaded machine) until the scan has opened its partial file.
    for (let i = 0; i < 1200 && partials(dir).length === 0; i++) await new Promise((r) => setTimeout(r, 25));
    expect(partials(dir)).toHaveLength(1);
    child.kill('SIGINT');
    expect(await exited).toBe(130);
    expect(stderr).toMatch(/stopped by SIGINT; .*old\.jsonl was not replaced/);
    expect(readFileSync(path).equals(old)).toBe(true);
    expect(partials(dir)).toEqual([]);
  });
});

/**
 * listen --out keeps what was there (issue 15). The bug: an invalid tracker setting exited 2
 * after --out was opened, and the start-up cleanup renamed the empty partial file over the
 * real one (0 bytes left). Now every option is checked before anything is opened; a failure
 * while starting abandons the partial file; a run that fails later leaves the file at --out
 * as it was and keeps this run's records (captured once) in the partial file, which stderr
 * names. The audio is a sox-made recording of calls (helpers.ts), streamed on stdin.
 */
import { spawn, spawnSync } from 'node:child_process';
import { execFileSync } from 'node:child_process';
import { lstatSync, mkdirSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { createServer, type Server } from 'node:net';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { BIN, expectUsageFailure, runCli } from '../helpers/cli.js';
import { liveFixture, RATE } from './helpers.js';

const fx = liveFixture('listen-out', 'calls', 30, 4);
const STDIN = ['listen', '--stdin', '--rate', String(RATE), '--channels', '2', '--spacing', '0.2'];

let n = 0;
function withOldFile(): { dir: string; path: string; old: Buffer } {
  const dir = join(fx.dir, `case${n++}`);
  mkdirSync(dir);
  const old = Buffer.from('{"start_s":1.2,"end_s":1.5,"azimuth_deg":30,"spread_deg":1,"confidence":0.9,"track":1}\n');
  const path = join(dir, 'live.jsonl');
  writeFileSync(path, old);
  return { dir, path, old };
}
const partials = (dir: string): string[] => readdirSync(dir).filter((f) => f.includes('.partial'));

describe('listen --out: a bad option changes nothing (the issue 15 bug)', () => {
  it.each([
    ['--confirm-hits above --confirm-window', ['--confirm-hits', '5', '--confirm-window', '3'], /--confirm-hits/],
    ['--track-timeout below --max-gap', ['--track-timeout', '0.05', '--max-gap', '0.1'], /--track-timeout/],
    ['--log-dir that is a file', ['--log-dir', 'FILE'], /^bearline: --log-dir .* is a file, not a folder/],
  ])('%s: exit 2 naming it, the old file byte for byte, no partial file', (_name, bad, named) => {
    const { dir, path, old } = withOldFile();
    const args = bad.map((a) => (a === 'FILE' ? path : a));
    const r = runCli([...STDIN, '--out', path, ...args], { input: readFileSync(fx.rec.raw) });
    expectUsageFailure(r, named);
    expect(readFileSync(path).equals(old)).toBe(true);
    expect(partials(dir)).toEqual([]);
  });

  it('a failure while starting (the feed port is taken): exit 1, the old file byte for byte, no partial file', async () => {
    const { dir, path, old } = withOldFile();
    const busy: Server = createServer();
    await new Promise<void>((res) => busy.listen(0, '127.0.0.1', res));
    const port = (busy.address() as { port: number }).port;
    try {
      const r = spawnSync(process.execPath, [BIN, ...STDIN, '--out', path, '--serve', '--feed-port', String(port)], { input: readFileSync(fx.rec.raw), encoding: 'utf8', timeout: 60_000 });
      expect(r.status).toBe(1);
      expect(r.stderr).toMatch(/already in use/);
    } finally {
      busy.close();
    }
    expect(readFileSync(path).equals(old)).toBe(true);
    expect(partials(dir)).toEqual([]);
  });
});

describe('listen --out: how the records end up', () => {
  it('stdin ends: the records replace the old file, no partial file left', () => {
    const { dir, path, old } = withOldFile();
    const r = runCli([...STDIN, '--out', path], { input: readFileSync(fx.rec.raw) });
    expect(r.status, r.stderr).toBe(0);
    const events = readFileSync(path, 'utf8').trim().split('\n').map((l) => JSON.parse(l) as Record<string, unknown>);
    expect(events.length).toBeGreaterThanOrEqual(3); // one per call of the 4 s recording
    expect(readFileSync(path).equals(old)).toBe(false);
    expect(partials(dir)).toEqual([]);
  });

  it('a write that fails midway (file size limit): exit 1, the old file intact, this run\'s records kept in the partial file stderr names', () => {
    const { dir, path, old } = withOldFile();
    // ulimit -f 8: at most 4 kB per file (POSIX RLIMIT_FSIZE); the frame records of 4 s are far more.
    const r = spawnSync('sh', ['-c', 'ulimit -f 8; exec "$@"', 'sh', process.execPath, BIN, ...STDIN, '--frames', '--out', path], {
      input: readFileSync(fx.rec.raw),
      encoding: 'utf8',
      timeout: 60_000,
    });
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/writing .*live\.jsonl failed \(EFBIG/);
    expect(readFileSync(path).equals(old)).toBe(true);
    const kept = partials(dir);
    expect(kept).toHaveLength(1);
    expect(r.stderr).toContain(`this run's records are in ${join(dir, kept[0]!)}`);
    const first = readFileSync(join(dir, kept[0]!), 'utf8').split('\n')[0]!;
    expect(JSON.parse(first)).toHaveProperty('time_s');
  });

  it('a FIFO read by another process: the records go through it, and it stays a FIFO', async () => {
    const { dir } = withOldFile();
    const fifo = join(dir, 'live.fifo');
    execFileSync('mkfifo', [fifo]);
    const got = join(dir, 'got.jsonl');
    const reader = spawn('sh', ['-c', 'cat "$0" > "$1"', fifo, got]);
    const readerDone = new Promise<number | null>((res) => reader.on('exit', res));
    const r = spawnSync(process.execPath, [BIN, ...STDIN, '--out', fifo], { input: readFileSync(fx.rec.raw), encoding: 'utf8', timeout: 60_000 });
    if (reader.exitCode === null) setTimeout(() => reader.kill(), 5000).unref();
    expect(r.status, r.stderr).toBe(0);
    expect(await readerDone).toBe(0);
    expect(readFileSync(got, 'utf8').trim().split('\n').length).toBeGreaterThanOrEqual(3);
    expect(lstatSync(fifo).isFIFO()).toBe(true);
    expect(partials(dir)).toEqual([]);
  });
});

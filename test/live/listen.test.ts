import { spawn } from 'node:child_process';
import { mkdirSync, readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { expectUsageFailure, runCli } from '../helpers/cli.js';
import { sox } from '../helpers/sox.js';
import { isEvent, isFrame, isGap, liveFixture, median, pairAzimuthDeg, pairTdoaS, RATE, standInRecorder } from './helpers.js';

// Calls from a far-field source at +35 deg (right of front) for the 0.2 m pair, made by sox.
// Truth: interface.md's far-field formula, tdoa = (p_a - p_b) . u / c = -D sin(az) / c,
// azimuth = -asin(c tdoa / D).
const AZ = 35;
const fx = liveFixture('bearline-listen-', 'east-calls', AZ, 4);

const pathWith = (bin: string): NodeJS.ProcessEnv => ({ PATH: `${bin}:${process.env.PATH}` });

describe('bearline listen through a stand-in recorder on PATH', () => {
  it('directions come out right; when the recorder exits, listen restarts it and marks the gap', async () => {
    const bin = join(fx.dir, 'bin-restart');
    // Run 1 streams 4 s of calls and exits with an error; run 2 streams them again and keeps running.
    standInRecorder(bin, 'sox', fx.rec.raw, 4, ['echo "sox FAIL: capture device went away" >&2; exit 3', 'exec sleep 60']);
    const logDir = join(fx.dir, 'logs-restart');
    mkdirSync(logDir);
    const run = fx.start(['listen', '--spacing', '0.2', '--recorder', 'sox', '--frames', '--log-dir', logDir, '--station', 'lab'], { env: pathWith(bin) });
    await run.waitFor((ls) => {
      const gap = ls.find(isGap);
      return gap !== undefined && ls.filter((l) => isEvent(l) && (l.start_s as number) > (gap.end_s as number)).length >= 2;
    }, 'a gap and two events after it', 30_000);
    run.child.kill('SIGTERM');
    expect(await run.exited).toBe(0);

    const gaps = run.lines.filter(isGap);
    expect(gaps).toHaveLength(1);
    const gap = gaps[0]!;
    expect(gap.gap).toMatch(/^sox exited with code 3 \(sox FAIL: capture device went away\)$/);
    // The gap sits where run 1's 4 s of audio ended (stream time), and covers the restart:
    // 0.5 s of back-off plus the new process's start. Loose bounds, a sanity check only (on a
    // loaded 2-core machine the restart once took 3.1 s).
    expect(gap.start_s as number).toBeGreaterThan(3.8);
    expect(gap.start_s as number).toBeLessThan(4.8);
    const lost = (gap.end_s as number) - (gap.start_s as number);
    expect(lost).toBeGreaterThan(0.3);
    expect(lost).toBeLessThan(6);
    expect(Date.parse(gap.utc as string)).not.toBeNaN();
    expect(run.stderr()).toMatch(/sox exited with code 3 .*; restarting sox in 0\.5 s/);
    // The same gap record, whole, in the station's gap log next to its events log.
    const gapLogs = readdirSync(logDir).filter((f) => /^lab\.gaps\..*\.jsonl$/.test(f));
    expect(gapLogs).toHaveLength(1);
    const logged = readFileSync(join(logDir, gapLogs[0]!), 'utf8').trim().split('\n').map((l) => JSON.parse(l) as Record<string, unknown>);
    expect(logged).toEqual([gap]);

    // Every event points at the source: within 3 deg of the truth (the pair's mirror is in front too).
    const events = run.lines.filter(isEvent);
    expect(events.length).toBeGreaterThanOrEqual(5);
    for (const e of events) expect(Math.abs((e.azimuth_deg as number) - AZ)).toBeLessThan(3);
    // Frames: the median tdoa of the confident frames matches -D sin(az) / c within 3 us, and
    // the azimuth of that tdoa by interface.md's formula is the truth within 2 deg.
    const tdoas = run.lines.filter((l) => isFrame(l) && (l.confidence as number) > 0.6).map((l) => (l.tdoa_s as number[])[0]!);
    expect(tdoas.length).toBeGreaterThan(20);
    expect(Math.abs(median(tdoas) - pairTdoaS(AZ))).toBeLessThan(3e-6);
    expect(Math.abs(pairAzimuthDeg(median(tdoas)) - AZ)).toBeLessThan(2);
    // Stream time keeps step with the clock: records after the gap start after its end, and utc - time_s is one constant.
    const frames = run.lines.filter(isFrame);
    const origin = frames.map((f) => Date.parse(f.utc as string) - (f.time_s as number) * 1000);
    expect(Math.max(...origin) - Math.min(...origin)).toBeLessThan(2);
    expect(frames.some((f) => (f.time_s as number) > (gap.start_s as number) && (f.time_s as number) < (gap.end_s as number) - 0.05)).toBe(false);
  });

  it('a recorder that keeps failing: after --max-restarts listen stops with exit 1 and a clear message, records kept', async () => {
    const bin = join(fx.dir, 'bin-fail');
    standInRecorder(bin, 'arecord', fx.rec.raw, 1.5, ['exit 1']);
    const run = fx.start(['listen', '--spacing', '0.2', '--recorder', 'arecord', '--max-restarts', '1', '--frames'], { env: pathWith(bin) });
    expect(await run.exited).toBe(1);
    expect(run.stderr()).toMatch(/bearline: the recorder arecord failed 2 times in a row \(last: arecord exited with code 1\); giving up/);
    expect(run.stderr()).not.toMatch(/^\s+at /m);
    // Two runs of 1.5 s of audio: the frames of both, and a gap record between them.
    const frames = run.lines.filter(isFrame);
    expect(frames.length).toBeGreaterThan(2 * 1.4 * (RATE / 512));
    expect(run.lines.filter(isGap).length).toBeGreaterThanOrEqual(1);
  });
});

describe('bearline listen --stdin', () => {
  it('reads a raw stream from a sox pipe; directions right, utc on every record', async () => {
    const run = fx.start(['listen', '--stdin', '--rate', String(RATE), '--channels', '2', '--spacing', '0.2'], { stdin: 'pipe' });
    const soxProc = spawn('sox', [fx.rec.wav, '-t', 'raw', '-e', 'signed-integer', '-b', '16', '-L', '-'], { stdio: ['ignore', 'pipe', 'inherit'] });
    soxProc.stdout.pipe(run.child.stdin!);
    expect(await run.exited).toBe(0);
    const events = run.lines.filter(isEvent);
    expect(events).toHaveLength(4); // one per call of the recording
    for (const e of events) {
      expect(Math.abs((e.azimuth_deg as number) - AZ)).toBeLessThan(3);
      expect(Date.parse(e.utc as string)).not.toBeNaN();
    }
    expect(run.lines.every((l) => isEvent(l))).toBe(true); // events only without --frames
    expect(run.stderr()).toMatch(/stdin ended: closing .*\n.*all records written \(\d+ events?(, \d+ gaps?)?(, \d+ frames?)? to stdout\); stopped/);
  });

  it('--profile station-low-cpu: its analysis hop (1024 samples) and its log section apply; flags win', () => {
    const raw = runCli(['listen', '--stdin', '--rate', String(RATE), '--channels', '2', '--spacing', '0.2', '--profile', 'station-low-cpu', '--frames'], {
      input: spawnSyncSox(fx.rec.wav, 1),
    });
    expect(raw.status, raw.stderr).toBe(0);
    const frames = raw.stdout.trim().split('\n').map((l) => JSON.parse(l) as Record<string, unknown>).filter(isFrame);
    const step = (frames[1]!.time_s as number) - (frames[0]!.time_s as number);
    expect(step).toBeCloseTo(1024 / RATE, 3);
    // The profile's log section holds maxDisk 4G: a --rotate-size over half of it must be refused, naming both.
    const r = runCli(['listen', '--stdin', '--rate', String(RATE), '--channels', '2', '--spacing', '0.2', '--profile', 'station-low-cpu', '--log-dir', join(fx.dir, 'logs-p'), '--rotate-size', '3G']);
    expectUsageFailure(r, /^bearline: --max-disk 4\.0 GiB must be at least twice --rotate-size \(3\.0 GiB\)/);
  });
});

/** The first seconds of a WAV as raw s16le, decoded by sox. */
function spawnSyncSox(wav: string, seconds: number): Buffer {
  return sox([wav, '-t', 'raw', '-e', 'signed-integer', '-b', '16', '-L', '-', 'trim', '0', String(seconds)]);
}

describe('bearline listen: bad usage exits 2 with one clear line', () => {
  it('an unknown recorder name', () => {
    expectUsageFailure(runCli(['listen', '--spacing', '0.2', '--recorder', '/bin/sh']), /--recorder <sox\|rec\|arecord>.*'\/bin\/sh' is not known; give one of sox, rec, arecord/);
  });
  it('--stdin without --rate', () => {
    expectUsageFailure(runCli(['listen', '--stdin', '--channels', '2', '--spacing', '0.2'], { input: '' }), /^bearline: --stdin needs --rate R and --channels N/);
  });
  it('--serve with a bad port', () => {
    expectUsageFailure(runCli(['listen', '--stdin', '--rate', '48000', '--channels', '2', '--spacing', '0.2', '--serve', '--feed-port', '70000'], { input: '' }), /--feed-port <n>' argument '70000' is invalid/);
  });
  it('feed options without --serve, recorder options with --stdin, no array', () => {
    expectUsageFailure(runCli(['listen', '--spacing', '0.2', '--feed-port', '9000']), /^bearline: --feed-port: only with --serve/);
    expectUsageFailure(runCli(['listen', '--stdin', '--rate', '48000', '--channels', '2', '--spacing', '0.2', '--device', 'hw:1'], { input: '' }), /^bearline: --device: for live capture through a recorder/);
    expectUsageFailure(runCli(['listen', '--stdin', '--rate', '48000', '--channels', '2'], { input: '' }), /^bearline: say what the array is/);
  });
  it('a recorder that is not installed', () => {
    expectUsageFailure(runCli(['listen', '--spacing', '0.2', '--recorder', 'arecord'], { env: { PATH: join(fx.dir, 'no-such-bin') } }), /^bearline: the recorder 'arecord' was not found on PATH/);
  });
});

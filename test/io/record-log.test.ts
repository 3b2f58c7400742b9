import { execFileSync } from 'node:child_process';
import { appendFileSync, existsSync, mkdirSync, readdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { tempDir } from '../helpers/temp-dir.js';
import { RuntimeFailure, UsageError } from '../../src/util/errors.js';
import { realFs, tornTailLength, jsonObjectLine, type LineFileFs } from '../../src/sinks/line-file.js';
import { eventColumns } from '../../src/records/event-columns.js';
import { frameColumns } from '../../src/records/frame-columns.js';
import { csvFieldCount, csvHeader } from '../../src/records/csv.js';
import {
  listLogFiles,
  parseLogFileName,
  RecordLog,
  repairLogFile,
} from '../../src/sinks/record-log.js';
import { resolveRecordLogOptions } from '../../src/sinks/record-log-options.js';
import { DRIVER_STATION, firstGap, LOG_DRIVER, readEvents, startDriver } from '../helpers/log-files.js';
import type { EventRecord } from '../../src/records/record-types.js';

function freshDir(): string {
  return tempDir('log').dir;
}

function ev(n: number): EventRecord {
  return { start_s: n / 10, end_s: n / 10 + 0.05, azimuth_deg: 12.5, spread_deg: 1, confidence: 0.9, track: n };
}

// Crash safety: an append-only log must survive SIGKILL with every record that write()
// returned intact and nothing doubled (common practice, no source). A write() that SIGKILL
// interrupts can stop short at a page boundary (Linux checks for a fatal signal between the
// pages it copies, from memory of its source; seen once, in a CI run: the newest file ended in
// a cut-off line), so right after a kill the newest file may end in a torn line: never an
// acknowledged record (its write() had not returned), and cut off when the log next starts
// (RecordLog.repairNewest).
describe('record log survives SIGKILL (child process driver)', () => {
  it('keeps every acknowledged record, with no gap, duplicate or torn line once restarted, across two kills', async () => {
    const dir = freshDir();
    let lastAck = 0;
    for (const target of [8_000, 20_000]) {
      const d = startDriver(LOG_DRIVER, [dir, '0', '32768']);
      await d.waitForAck(target);
      d.child.kill('SIGKILL');
      const { signal } = await d.exited;
      expect(signal).toBe('SIGKILL');
      lastAck = d.acked();
      const disk = readEvents(dir, DRIVER_STATION);
      // at most the newest file's last line torn, and nothing else that does not parse
      const newest = disk.files[disk.files.length - 1];
      expect(disk.unterminated.filter((f) => f !== newest)).toEqual([]);
      expect(disk.badLines.length).toBeLessThanOrEqual(disk.unterminated.length);
      expect(firstGap(disk.numbers)).toBe(disk.numbers.length);
      expect(disk.numbers.length).toBeGreaterThanOrEqual(lastAck);
    }
    const d = startDriver(LOG_DRIVER, [dir, '5000', '32768']);
    const { code } = await d.exited;
    expect(code).toBe(0);
    const disk = readEvents(dir, DRIVER_STATION);
    // the restarts cut any torn line off (kept aside in PATH.torn, not a log file)
    expect(disk.unterminated).toEqual([]);
    expect(disk.badLines).toEqual([]);
    const end = Number(/done at (\d+)/.exec(d.stdout())![1]);
    expect(disk.numbers.length).toBe(end);
    expect(firstGap(disk.numbers)).toBe(end);
    expect(new Set(disk.numbers).size).toBe(end);
    expect(end).toBeGreaterThan(lastAck);
  });

  it('SIGTERM flushes and closes: the driver exits 0 and every record it wrote is on disk', async () => {
    const dir = freshDir();
    const d = startDriver(LOG_DRIVER, [dir, '0', '65536']);
    await d.waitForAck(8_000);
    d.child.kill('SIGTERM');
    const { code } = await d.exited;
    expect(code).toBe(0);
    const written = Number(/closed after (\d+)/.exec(d.stdout())![1]);
    expect(d.stderr()).toMatch(/all records written; stopped/);
    const disk = readEvents(dir, DRIVER_STATION);
    expect(disk.numbers.length).toBe(written);
    expect(firstGap(disk.numbers)).toBe(written);
    expect(disk.unterminated).toEqual([]);
  });
});

const EVENTS_HEADER = csvHeader(eventColumns());

describe('torn-line repair', () => {
  it('the pure check finds a partial last line, an unparsable last line, and asks for more when the window is short', () => {
    const ok = Buffer.from('{"a":1}\n{"a":2}\n');
    expect(tornTailLength(ok, true, jsonObjectLine)).toBe(0);
    expect(tornTailLength(Buffer.from('{"a":1}\n{"a":2}\n{"a"'), true, jsonObjectLine)).toBe(4);
    expect(tornTailLength(Buffer.from('{"a":1}\n{"a":2,"b\n'), true, jsonObjectLine)).toBe(10);
    // power loss can leave zero bytes where the tail of the file should be
    expect(tornTailLength(Buffer.from('{"a":1}\n\0\0\0\0'), true, jsonObjectLine)).toBe(4);
    expect(tornTailLength(Buffer.from('a":1}'), false, jsonObjectLine)).toBe(-1);
    expect(tornTailLength(Buffer.from('{"a"'), true, jsonObjectLine)).toBe(4);
  });

  it('cuts a hand-made torn JSON Lines file back to its whole lines and keeps the cut bytes', () => {
    const dir = freshDir();
    const path = join(dir, 'pond-test.events.20250614T210000Z.jsonl');
    const whole = [0, 1, 2].map((n) => JSON.stringify(ev(n)) + '\n').join('');
    writeFileSync(path, whole + '{"start_s":0.3,"end_s":0.35,"azim');
    const r = repairLogFile(path);
    expect(r).not.toBeNull();
    expect(r!.cutBytes).toBe('{"start_s":0.3,"end_s":0.35,"azim'.length);
    expect(readFileSync(path, 'utf8')).toBe(whole);
    expect(readFileSync(r!.keptAt!, 'utf8')).toBe('{"start_s":0.3,"end_s":0.35,"azim');
    expect(repairLogFile(path)).toBeNull();
  });

  it('cuts a CSV row with the wrong number of fields', () => {
    const dir = freshDir();
    const path = join(dir, 'pond-test.events.20250614T210000Z.csv');
    // A whole row has as many fields as the header (built from it, so that new columns keep it whole).
    const cells = ['1.5', '1.9', '', '10'];
    while (cells.length < csvFieldCount(EVENTS_HEADER)) cells.push('');
    const row = cells.join(',') + '\n';
    expect(csvFieldCount(row.trimEnd())).toBe(csvFieldCount(EVENTS_HEADER));
    writeFileSync(path, EVENTS_HEADER + '\n' + row + '1.6,2.0,,11\n');
    expect(repairLogFile(path, false)!.cutBytes).toBe('1.6,2.0,,11\n'.length);
    expect(readFileSync(path, 'utf8')).toBe(EVENTS_HEADER + '\n' + row);
  });

  it('on start the log repairs the newest file, warns, and appends nothing to it', () => {
    const dir = freshDir();
    const old = join(dir, 'pond-test.events.20250614T210000Z.jsonl');
    writeFileSync(old, JSON.stringify(ev(0)) + '\n' + '{"start_s":0.1,"tra');
    const warnings: string[] = [];
    const log = new RecordLog('pond-test', { logDir: dir }, { onWarning: (m) => warnings.push(m), clock: () => Date.parse('2025-06-14T22:00:00Z') });
    log.event(ev(1));
    log.close();
    expect(warnings.join('\n')).toMatch(/torn line.*cut 19 bytes, kept in .*\.torn/);
    expect(readFileSync(old, 'utf8')).toBe(JSON.stringify(ev(0)) + '\n');
    expect(readEvents(dir, 'pond-test').numbers).toEqual([0, 1]);
  });
});

describe('rotation', () => {
  it('by size under a fast stream: no file passes the limit, order and count kept across files', () => {
    const dir = freshDir();
    const log = new RecordLog('pond-test', { logDir: dir, rotateSize: 16 * 1024 });
    for (let n = 0; n < 20_000; n++) log.event(ev(n));
    log.close();
    const files = listLogFiles(dir, 'pond-test');
    expect(files.length).toBeGreaterThan(50);
    for (const f of files) expect(f.size).toBeLessThanOrEqual(16 * 1024);
    const disk = readEvents(dir, 'pond-test');
    expect(disk.numbers.length).toBe(20_000);
    expect(firstGap(disk.numbers)).toBe(20_000);
    // a plain sort of the names (what `cat *.jsonl` sees) is the same order
    const sorted = readdirSync(dir).filter((n) => n.endsWith('.jsonl')).sort();
    expect(sorted.map((n) => join(dir, n))).toEqual(files.map((f) => f.path));
  });

  it('by UTC day with an injected clock', () => {
    const dir = freshDir();
    let now = Date.parse('2025-06-14T23:59:58.500Z');
    const log = new RecordLog('pond-test', { logDir: dir, logFormat: 'csv' }, { clock: () => now });
    for (let n = 0; n < 3; n++) log.event(ev(n));
    now = Date.parse('2025-06-15T00:00:01.200Z');
    for (let n = 3; n < 5; n++) log.event(ev(n));
    log.close();
    const files = listLogFiles(dir, 'pond-test');
    expect(files.map((f) => f.path.slice(dir.length + 1))).toEqual([
      'pond-test.events.20250614T235958Z.csv',
      'pond-test.events.20250615T000001Z.csv',
    ]);
    const rows = files.map((f) => readFileSync(f.path, 'utf8').trimEnd().split('\n'));
    expect(rows[0]![0]).toBe(EVENTS_HEADER);
    expect(rows.map((r) => r.length - 1)).toEqual([3, 2]);
    expect(rows[1]![2]!.split(',')[8]).toBe('4'); // track column
  });

  it('CSV frames use the frame columns of scan (one tdoa column per pair of a 4-mic array)', () => {
    const dir = freshDir();
    const log = new RecordLog('pond-test', { logDir: dir, logFormat: 'csv', logFrames: true });
    for (let n = 0; n < 3; n++) log.frame({ time_s: n * 0.02, azimuth_deg: n === 1 ? null : 20, elevation_deg: null, confidence: 0.5, tdoa_s: [1e-4, 2e-4, null, 0, -1e-4, 5e-5], level_dbfs: -30 });
    log.close();
    const text = readFileSync(listLogFiles(dir, 'pond-test', 'frames')[0]!.path, 'utf8');
    const lines = text.trimEnd().split('\n');
    expect(lines[0]).toBe(csvHeader(frameColumns([[0, 1], [0, 2], [0, 3], [1, 2], [1, 3], [2, 3]], false)));
    expect(lines[0]).toMatch(/tdoa_s_0_1,tdoa_s_0_2,tdoa_s_0_3,tdoa_s_1_2,tdoa_s_1_3,tdoa_s_2_3$/);
    expect(lines.length).toBe(4);
    for (const l of lines) expect(csvFieldCount(l)).toBe(csvFieldCount(lines[0]!));
    expect(lines[2]!.split(',')[1]).toBe(''); // null azimuth is an empty cell
  });

  it('reopen (SIGHUP) starts new files', () => {
    const dir = freshDir();
    const log = new RecordLog('pond-test', { logDir: dir }, { clock: () => Date.parse('2025-06-14T21:00:00Z') });
    log.event(ev(0));
    log.reopen();
    log.event(ev(1));
    log.close();
    expect(listLogFiles(dir, 'pond-test').map((f) => parseLogFileName(f.path.slice(dir.length + 1))!.n)).toEqual([0, 1]);
  });
});

describe('disk limits', () => {
  it('--max-disk deletes the oldest files first and never the open one', () => {
    const dir = freshDir();
    const warnings: string[] = [];
    const log = new RecordLog('pond-test', { logDir: dir, rotateSize: 4096, maxDisk: 16 * 1024 }, { onWarning: (m) => warnings.push(m) });
    for (let n = 0; n < 3000; n++) log.event(ev(n));
    const open = log.openPaths();
    expect(existsSync(open[0]!)).toBe(true);
    log.close();
    const files = listLogFiles(dir, 'pond-test');
    const total = files.reduce((s, f) => s + f.size, 0);
    expect(total).toBeLessThanOrEqual(16 * 1024 + 4096);
    expect(files[files.length - 1]!.path).toBe(open[0]);
    const disk = readEvents(dir, 'pond-test');
    expect(disk.numbers[0]).toBeGreaterThan(0);
    expect(disk.numbers[disk.numbers.length - 1]).toBe(2999);
    expect(firstGap(disk.numbers, disk.numbers[0])).toBe(disk.numbers.length);
    const deleted = warnings.filter((w) => w.startsWith('deleted oldest log file')).map((w) => w.split(' ')[4]!);
    expect(deleted.length).toBeGreaterThan(5);
    expect([...deleted].sort()).toEqual(deleted);
    for (const d of deleted) expect(d < files[0]!.path).toBe(true);
  });

  it('warns once when free space falls below --min-free', () => {
    const dir = freshDir();
    const warnings: string[] = [];
    const log = new RecordLog('pond-test', { logDir: dir, minFree: 10 * 1024 ** 2 }, { onWarning: (m) => warnings.push(m), freeBytes: () => 3 * 1024 ** 2 });
    log.event(ev(0));
    expect(log.stats().diskFree).toBe(3 * 1024 ** 2);
    log.close();
    expect(warnings).toEqual([expect.stringMatching(/only 3\.0 MiB free .*below --min-free 10\.0 MiB/)]);
  });

  it('a full disk (1 MiB tmpfs) gives a clear RuntimeFailure and leaves only whole records', () => {
    const dir = freshDir();
    const mnt = join(dir, 'tiny');
    mkdirSync(mnt);
    try {
      execFileSync('mount', ['-t', 'tmpfs', '-o', 'size=1m', 'tmpfs', mnt], { stdio: 'pipe' });
    } catch (err) {
      throw new Error(`this test mounts a 1 MiB tmpfs and needs root (mount failed: ${(err as Error).message.split('\n')[0]})`);
    }
    try {
      const log = new RecordLog('pond-test', { logDir: mnt, rotateSize: 256 * 1024, minFree: 0 });
      let written = 0;
      let failure: unknown = null;
      try {
        for (; written < 1_000_000; written++) log.event(ev(written));
      } catch (err) {
        failure = err;
      }
      expect(failure).toBeInstanceOf(RuntimeFailure);
      expect((failure as Error).message).toMatch(/^cannot write .*pond-test\.events.*: the disk is full \(ENOSPC\); free some space/);
      expect(() => log.event(ev(written))).toThrow(/ENOSPC/);
      log.close();
      const disk = readEvents(mnt, 'pond-test');
      expect(disk.unterminated).toEqual([]);
      expect(disk.badLines).toEqual([]);
      expect(disk.numbers.length).toBe(written);
      expect(firstGap(disk.numbers)).toBe(written);
      expect(written).toBeGreaterThan(5000);
    } finally {
      execFileSync('umount', [mnt]);
    }
  });

  it('an I/O error in the middle of a write (injected fs layer) is cut back and reported', () => {
    const dir = freshDir();
    let calls = 0;
    const failing: LineFileFs = {
      ...realFs,
      writeSync: (fd, buf, off, len) => {
        if (++calls === 40) {
          realFs.writeSync(fd, buf, off, Math.floor(len / 2));
          throw Object.assign(new Error('EIO: i/o error, write'), { code: 'EIO' });
        }
        return realFs.writeSync(fd, buf, off, len);
      },
    };
    const log = new RecordLog('pond-test', { logDir: dir }, { fs: failing });
    expect(() => {
      for (let n = 0; n < 100; n++) log.event(ev(n));
    }).toThrow(/storage reported an I\/O error \(EIO\)/);
    log.close();
    const disk = readEvents(dir, 'pond-test');
    expect(disk.unterminated).toEqual([]);
    expect(disk.numbers).toEqual(Array.from({ length: 39 }, (_, i) => i));
    expect(statSync(listLogFiles(dir, 'pond-test')[0]!.path).size).toBe(readFileSync(listLogFiles(dir, 'pond-test')[0]!.path).length);
    appendFileSync(join(dir, 'unrelated.txt'), 'x'); // other files in the folder are left alone
    expect(listLogFiles(dir, 'pond-test').length).toBe(1);
  });
});

describe('record log options', () => {
  it('parse sizes with 1024-based units (common practice, no source) and reject bad combinations', () => {
    expect(resolveRecordLogOptions({}).rotateSize).toBe(64 * 1024 * 1024);
    expect(() => resolveRecordLogOptions({ rotateSize: 1000 })).toThrow(UsageError);
    expect(() => resolveRecordLogOptions({ rotateSize: 1024 ** 2, maxDisk: 1024 ** 2 })).toThrow(/at least twice --rotate-size/);
    expect(() => resolveRecordLogOptions({ fsyncEvery: 0 })).toThrow(/--fsync-every/);
    expect(() => new RecordLog('pond/test', { logDir: freshDir() })).toThrow(/station id 'pond\/test' is not allowed/);
  });
});

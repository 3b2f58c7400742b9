import * as nodeFs from 'node:fs';
import { join } from 'node:path';
import { RuntimeFailure, UsageError } from '../errors.js';
import type { EventRecord, FrameRecord } from '../records.js';
import { formatByteSize, parseByteSize } from '../station/byte-size.js';
import type { OptionSpec } from '../station/option-spec.js';
import { validateStationId } from '../station/station-id.js';
import { jsonObjectLine, LineFile, type LineFileFs, realFs, repairTail, type TailRepair } from './line-file.js';

/**
 * Log sink for frame and event records: JSON Lines (or CSV) files in one directory.
 *
 * File names: STATION.KIND.YYYYMMDDTHHMMSSZ[_NNN].EXT, e.g. marsh-east.events.20250614T213000Z.jsonl,
 * where the time is the UTC time the file was opened and _001, _002, ... separate files opened
 * in the same second, so a plain sort of the names (ls, cat *.jsonl) is oldest first. A new file starts when the open one would pass the size limit, when the UTC
 * day changes, on reopen() (SIGHUP) and on every start. Each record is one write() of a whole
 * line; files are fsynced on a timer, on rotation and on close.
 */

export type LogFormat = 'jsonl' | 'csv';
export type RecordKind = 'frames' | 'events';
export const RECORD_KINDS: readonly RecordKind[] = ['frames', 'events'];

export interface RecordLogOptions {
  /** Directory for the log files; null = no logging. */
  logDir: string | null;
  logFormat: LogFormat;
  /** Also log frame records (one per hop), not only events. */
  logFrames: boolean;
  /** Start a new file before one would grow past this many bytes. */
  rotateSize: number;
  /** Seconds between fsyncs of the open files. */
  fsyncEvery: number;
  /** Delete the oldest log files of this station when all of them together pass this many bytes; null = no limit. */
  maxDisk: number | null;
  /** Warn when the free space on the log disk falls below this many bytes. */
  minFree: number;
}

export const RECORD_LOG_DEFAULTS: RecordLogOptions = {
  logDir: null,
  logFormat: 'jsonl',
  logFrames: false,
  rotateSize: 64 * 1024 ** 2,
  fsyncEvery: 5,
  maxDisk: null,
  minFree: 200 * 1024 ** 2,
};

function parseFormat(raw: string): LogFormat {
  if (raw !== 'jsonl' && raw !== 'csv') throw new UsageError(`log format '${raw}' is not known; use jsonl or csv`);
  return raw;
}

function parseSeconds(raw: string): number {
  const n = Number(raw);
  if (raw.trim() === '' || !Number.isFinite(n) || n <= 0 || n > 3600) {
    throw new UsageError(`fsync interval '${raw}' must be a number of seconds above 0 and at most 3600`);
  }
  return n;
}

export const recordLogOptionSpecs: OptionSpec<RecordLogOptions>[] = [
  { key: 'logDir', flag: '--log-dir <dir>', help: 'write records to rotating files in this directory', parse: (raw) => raw },
  { key: 'logFormat', flag: '--log-format <format>', help: 'log file format: jsonl or csv', defaultText: 'jsonl', parse: parseFormat },
  { key: 'logFrames', flag: '--log-frames', help: 'also log one frame record per hop (large files), not only events' },
  { key: 'rotateSize', flag: '--rotate-size <size>', help: 'start a new log file at this size (e.g. 64M); files also rotate at each UTC midnight', defaultText: '64M', parse: (raw) => parseByteSize(raw, '--rotate-size') },
  { key: 'fsyncEvery', flag: '--fsync-every <seconds>', help: 'seconds between forced writes to disk (records written since can be lost on power failure, not on a crash)', defaultText: '5', parse: parseSeconds },
  { key: 'maxDisk', flag: '--max-disk <size>', help: "delete this station's oldest log files when all of them pass this size (e.g. 2G)", defaultText: 'no limit', parse: (raw) => parseByteSize(raw, '--max-disk') },
  { key: 'minFree', flag: '--min-free <size>', help: 'warn when free space on the log disk falls below this size', defaultText: '200M', parse: (raw) => parseByteSize(raw, '--min-free') },
];

/** Fill in defaults and check the combination. Throws UsageError naming the option. */
export function resolveRecordLogOptions(partial: Partial<RecordLogOptions>): RecordLogOptions {
  const o: RecordLogOptions = { ...RECORD_LOG_DEFAULTS };
  for (const [k, v] of Object.entries(partial) as [keyof RecordLogOptions, unknown][]) {
    if (v !== undefined) (o as unknown as Record<string, unknown>)[k] = v;
  }
  if (o.logDir !== null && o.logDir.trim() === '') throw new UsageError('--log-dir is empty; give a directory');
  parseFormat(o.logFormat);
  if (!Number.isSafeInteger(o.rotateSize) || o.rotateSize < 4096) throw new UsageError(`--rotate-size ${o.rotateSize} is too small; use at least 4K`);
  if (!(o.fsyncEvery > 0 && o.fsyncEvery <= 3600)) throw new UsageError(`--fsync-every ${o.fsyncEvery} must be above 0 and at most 3600 seconds`);
  if (o.maxDisk !== null && o.maxDisk < 2 * o.rotateSize) {
    throw new UsageError(`--max-disk ${formatByteSize(o.maxDisk)} must be at least twice --rotate-size (${formatByteSize(o.rotateSize)}); raise it or lower --rotate-size`);
  }
  if (!Number.isSafeInteger(o.minFree) || o.minFree < 0) throw new UsageError(`--min-free ${o.minFree} is not a size`);
  return o;
}

// ---------- file names (pure) ----------

export interface LogFileName {
  station: string;
  kind: RecordKind;
  /** UTC open time, YYYYMMDDTHHMMSSZ. */
  stamp: string;
  /** 0 for the first file of that second, then 1, 2, ... */
  n: number;
  format: LogFormat;
}

const NAME = /^([A-Za-z0-9][A-Za-z0-9_-]{0,63})\.(frames|events)\.(\d{8}T\d{6}Z)(?:_(\d{3,}))?\.(jsonl|csv)$/;

export function utcStamp(ms: number): string {
  return new Date(ms).toISOString().replace(/[-:]/g, '').replace(/\.\d{3}Z$/, 'Z');
}

export function utcDay(ms: number): string {
  return new Date(ms).toISOString().slice(0, 10);
}

export function formatLogFileName(f: LogFileName): string {
  return `${f.station}.${f.kind}.${f.stamp}${f.n > 0 ? `_${String(f.n).padStart(3, '0')}` : ''}.${f.format}`;
}

export function parseLogFileName(name: string): LogFileName | null {
  const m = NAME.exec(name);
  if (!m) return null;
  return { station: m[1]!, kind: m[2] as RecordKind, stamp: m[3]!, n: m[4] ? Number(m[4]) : 0, format: m[5] as LogFormat };
}

/** Oldest first: by open time, then by the same-second counter. */
export function compareLogFiles(a: LogFileName, b: LogFileName): number {
  return a.stamp < b.stamp ? -1 : a.stamp > b.stamp ? 1 : a.n - b.n;
}

export interface LogFileEntry extends LogFileName {
  path: string;
  size: number;
}

/** This station's log files in `dir`, oldest first (all kinds unless one is given). */
export function listLogFiles(dir: string, station: string, kind?: RecordKind): LogFileEntry[] {
  const out: LogFileEntry[] = [];
  for (const name of nodeFs.readdirSync(dir)) {
    const f = parseLogFileName(name);
    if (!f || f.station !== station || (kind && f.kind !== kind)) continue;
    const path = join(dir, name);
    out.push({ ...f, path, size: nodeFs.statSync(path).size });
  }
  return out.sort(compareLogFiles);
}

// ---------- CSV (pure) ----------

type Cell = string | number | boolean | null | undefined;

const FRAME_COLUMNS = ['time_s', 'utc', 'azimuth_deg', 'elevation_deg', 'bearing_deg', 'confidence', 'tdoa_s', 'level_dbfs', 'mirror', 'onset', 'track'] as const;
const EVENT_COLUMNS = ['start_s', 'end_s', 'utc', 'azimuth_deg', 'elevation_deg', 'bearing_deg', 'spread_deg', 'confidence', 'track', 'peak_dbfs', 'band_low_hz', 'band_high_hz', 'mirror', 'station'] as const;

export const CSV_HEADER: Record<RecordKind, string> = {
  frames: FRAME_COLUMNS.join(','),
  events: EVENT_COLUMNS.join(','),
};

function cell(v: Cell): string {
  if (v === null || v === undefined) return '';
  if (typeof v !== 'string') return String(v);
  const s = v;
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** A frame as one CSV row; tdoa_s entries are joined with ';' (empty where a pair has none). */
export function frameCsvRow(r: FrameRecord): string {
  const tdoa = r.tdoa_s.map((t) => (t === null ? '' : String(t))).join(';');
  return [r.time_s, r.utc, r.azimuth_deg, r.elevation_deg, r.bearing_deg, r.confidence, tdoa, r.level_dbfs, r.mirror, r.onset, r.track].map(cell).join(',');
}

export function eventCsvRow(r: EventRecord): string {
  return [r.start_s, r.end_s, r.utc, r.azimuth_deg, r.elevation_deg, r.bearing_deg, r.spread_deg, r.confidence, r.track, r.peak_dbfs, r.band_hz?.[0], r.band_hz?.[1], r.mirror, r.station]
    .map(cell)
    .join(',');
}

/** Number of fields in a CSV line, honouring double-quoted fields. */
export function csvFieldCount(line: string): number {
  let n = 1;
  let quoted = false;
  for (let i = 0; i < line.length; i++) {
    const ch = line[i];
    if (ch === '"') quoted = !quoted;
    else if (ch === ',' && !quoted) n++;
  }
  return quoted ? -1 : n;
}

function lineCheck(format: LogFormat, kind: RecordKind): (line: string) => boolean {
  if (format === 'jsonl') return jsonObjectLine;
  const columns = csvFieldCount(CSV_HEADER[kind]);
  return (line) => csvFieldCount(line) === columns;
}

/** Cut a torn or invalid last line off one log file (kept in PATH.torn). Null when it was whole. */
export function repairLogFile(path: string, keepCut = true): TailRepair | null {
  const slash = Math.max(path.lastIndexOf('/'), path.lastIndexOf('\\'));
  const f = parseLogFileName(path.slice(slash + 1));
  const check = f ? lineCheck(f.format, f.kind) : jsonObjectLine;
  return repairTail(path, check, keepCut);
}

// ---------- the sink (I/O) ----------

export interface RecordLogDeps {
  /** Milliseconds since the epoch; injected so tests can cross UTC midnight. */
  clock?: () => number;
  /** Non-fatal news: a repaired file, a deleted old file, low disk space. */
  onWarning?: (message: string) => void;
  fs?: LineFileFs;
  /** Free bytes on the file system holding `dir`. */
  freeBytes?: (dir: string) => number;
}

export interface RecordLogStats {
  records: Record<RecordKind, number>;
  /** Bytes in this station's log files in the directory. */
  diskUsed: number;
  /** Free bytes on the log disk at the last check, null before the first. */
  diskFree: number | null;
}

interface OpenFile {
  file: LineFile;
  name: LogFileName;
  day: string;
  lines: number;
}

function statfsFree(dir: string): number {
  const s = nodeFs.statfsSync(dir);
  return s.bavail * s.bsize;
}

export class RecordLog {
  readonly options: RecordLogOptions;
  readonly dir: string;
  /** For the shutdown helper's messages. */
  readonly name: string;
  private readonly clock: () => number;
  private readonly warn: (message: string) => void;
  private readonly fs: LineFileFs;
  private readonly freeBytes: (dir: string) => number;
  private readonly open: Partial<Record<RecordKind, OpenFile>> = {};
  private readonly lastOpened: Partial<Record<RecordKind, LogFileName>> = {};
  /** Closed files of this station, oldest first, for the disk limit. */
  private closedFiles: LogFileEntry[] = [];
  private readonly counts: Record<RecordKind, number> = { frames: 0, events: 0 };
  private lastFree: number | null = null;
  private lowSpaceWarned = false;
  private overLimitWarned = false;
  private failure: RuntimeFailure | null = null;
  private timer: NodeJS.Timeout | null = null;
  private closed = false;
  /** What the start-up check cut off. */
  readonly repairs: TailRepair[] = [];

  constructor(
    readonly station: string,
    options: Partial<RecordLogOptions>,
    deps: RecordLogDeps = {},
  ) {
    validateStationId(station);
    this.options = resolveRecordLogOptions(options);
    if (this.options.logDir === null) throw new UsageError('no --log-dir given for the record log');
    this.dir = this.options.logDir;
    this.name = `log files in ${this.dir}`;
    this.clock = deps.clock ?? Date.now;
    this.warn = deps.onWarning ?? ((m) => process.stderr.write(`bearline: warning: ${m}\n`));
    this.fs = deps.fs ?? realFs;
    this.freeBytes = deps.freeBytes ?? statfsFree;
    try {
      nodeFs.mkdirSync(this.dir, { recursive: true });
      nodeFs.accessSync(this.dir, nodeFs.constants.W_OK);
    } catch (err) {
      throw new RuntimeFailure(`cannot use log directory ${this.dir}: ${(err as Error).message}; create it or pick another --log-dir`);
    }
    this.repairNewest();
    this.closedFiles = listLogFiles(this.dir, station);
    this.enforceDiskLimit();
    this.checkFreeSpace();
    this.timer = setInterval(() => this.tick(), this.options.fsyncEvery * 1000);
    this.timer.unref();
  }

  private repairNewest(): void {
    for (const kind of RECORD_KINDS) {
      const files = listLogFiles(this.dir, this.station, kind);
      const newest = files[files.length - 1];
      if (!newest) continue;
      const r = repairLogFile(newest.path);
      if (!r) continue;
      this.repairs.push(r);
      let note = '';
      if (nodeFs.statSync(newest.path).size === 0) {
        nodeFs.unlinkSync(newest.path);
        note = ' (nothing whole was left, so the file was removed)';
      }
      this.warn(`${newest.path} ended in a torn line (an earlier run was cut off); cut ${r.cutBytes} bytes${r.keptAt ? `, kept in ${r.keptAt}` : ''}${note}`);
    }
  }

  writeFrame(record: FrameRecord): void {
    if (!this.options.logFrames) return;
    this.write('frames', this.options.logFormat === 'csv' ? frameCsvRow(record) : JSON.stringify(record));
  }

  writeEvent(record: EventRecord): void {
    this.write('events', this.options.logFormat === 'csv' ? eventCsvRow(record) : JSON.stringify(record));
  }

  private write(kind: RecordKind, text: string): void {
    if (this.failure) throw this.failure;
    if (this.closed) throw new RuntimeFailure('internal: record log written after close');
    const line = Buffer.from(text + '\n', 'utf8');
    const now = this.clock();
    let f = this.open[kind];
    if (f && (f.day !== utcDay(now) || (f.lines > 0 && f.file.size + line.length > this.options.rotateSize))) {
      this.rotate(kind);
      f = undefined;
    }
    try {
      if (!f) {
        f = this.openFile(kind, now, line);
        this.open[kind] = f;
      } else {
        f.file.append(line);
      }
    } catch (err) {
      if (err instanceof RuntimeFailure) this.failure = err;
      throw err;
    }
    f.lines++;
    this.counts[kind]++;
  }

  /** Open a new file for `kind` and write its first line (after the CSV header) in the same write. */
  private openFile(kind: RecordKind, now: number, firstLine: Buffer): OpenFile {
    const base = { station: this.station, kind, stamp: utcStamp(now), format: this.options.logFormat };
    // Never reuse the name of a file deleted in the same second: names must keep sorting oldest first.
    const last = this.lastOpened[kind];
    let n = last && last.stamp === base.stamp ? last.n + 1 : 0;
    while (nodeFs.existsSync(join(this.dir, formatLogFileName({ ...base, n })))) n++;
    const name: LogFileName = { ...base, n };
    this.lastOpened[kind] = name;
    const path = join(this.dir, formatLogFileName(name));
    const file = new LineFile(path, this.fs);
    const head = this.options.logFormat === 'csv' ? Buffer.from(CSV_HEADER[kind] + '\n') : Buffer.alloc(0);
    try {
      file.append(Buffer.concat([head, firstLine]));
    } catch (err) {
      file.close();
      if (nodeFs.statSync(path).size === 0) nodeFs.unlinkSync(path);
      throw err;
    }
    syncDir(this.dir);
    return { file, name, day: utcDay(now), lines: 0 };
  }

  private rotate(kind: RecordKind): void {
    const f = this.open[kind];
    if (!f) return;
    delete this.open[kind];
    f.file.close();
    this.closedFiles.push({ ...f.name, path: f.file.path, size: f.file.size });
    this.enforceDiskLimit();
  }

  private totalBytes(): number {
    let total = 0;
    for (const c of this.closedFiles) total += c.size;
    for (const kind of RECORD_KINDS) total += this.open[kind]?.file.size ?? 0;
    return total;
  }

  private enforceDiskLimit(): void {
    const limit = this.options.maxDisk;
    if (limit === null) return;
    let total = this.totalBytes();
    while (total > limit && this.closedFiles.length > 0) {
      const oldest = this.closedFiles.shift()!;
      try {
        nodeFs.unlinkSync(oldest.path);
      } catch (err) {
        if ((err as NodeJS.ErrnoException).code !== 'ENOENT') {
          this.warn(`could not delete old log file ${oldest.path}: ${(err as Error).message}`);
          continue;
        }
      }
      total -= oldest.size;
      this.warn(`deleted oldest log file ${oldest.path} (${formatByteSize(oldest.size)}) to keep logs under --max-disk ${formatByteSize(limit)}`);
    }
    if (total > limit && !this.overLimitWarned) {
      this.overLimitWarned = true;
      this.warn(`the open log files alone (${formatByteSize(total)}) pass --max-disk ${formatByteSize(limit)}; lower --rotate-size`);
    } else if (total <= limit) {
      this.overLimitWarned = false;
    }
  }

  private checkFreeSpace(): void {
    let free: number;
    try {
      free = this.freeBytes(this.dir);
    } catch {
      return;
    }
    this.lastFree = free;
    if (free < this.options.minFree) {
      if (!this.lowSpaceWarned) {
        this.lowSpaceWarned = true;
        this.warn(`only ${formatByteSize(free)} free on the disk of ${this.dir} (below --min-free ${formatByteSize(this.options.minFree)}); free space or set --max-disk`);
      }
    } else {
      this.lowSpaceWarned = false;
    }
  }

  /** fsync the open files now. */
  flush(): void {
    if (this.failure) throw this.failure;
    for (const kind of RECORD_KINDS) {
      try {
        this.open[kind]?.file.sync();
      } catch (err) {
        if (err instanceof RuntimeFailure) this.failure = err;
        throw err;
      }
    }
  }

  private tick(): void {
    if (this.closed || this.failure) return;
    try {
      this.flush();
    } catch (err) {
      this.warn((err as Error).message);
      return;
    }
    this.enforceDiskLimit();
    this.checkFreeSpace();
  }

  /** Close the open files; the next record starts new ones (for SIGHUP after moving files away). */
  reopen(): void {
    if (this.closed) return;
    for (const kind of RECORD_KINDS) this.rotate(kind);
    this.closedFiles = listLogFiles(this.dir, this.station);
  }

  stats(): RecordLogStats {
    return { records: { ...this.counts }, diskUsed: this.totalBytes(), diskFree: this.lastFree };
  }

  /** The paths of the files open now (none before the first record). */
  openPaths(): string[] {
    return RECORD_KINDS.flatMap((k) => (this.open[k] ? [this.open[k]!.file.path] : []));
  }

  close(): void {
    if (this.closed) return;
    this.closed = true;
    if (this.timer) clearInterval(this.timer);
    let first: unknown = null;
    for (const kind of RECORD_KINDS) {
      const f = this.open[kind];
      if (!f) continue;
      delete this.open[kind];
      try {
        f.file.close();
      } catch (err) {
        first ??= err;
      }
    }
    if (first) throw first;
  }
}

function syncDir(dir: string): void {
  let fd: number | null = null;
  try {
    fd = nodeFs.openSync(dir, 'r');
    nodeFs.fsyncSync(fd);
  } catch {
    // Some file systems do not fsync directories; the file's own fsync still holds its data.
  } finally {
    if (fd !== null) nodeFs.closeSync(fd);
  }
}

import * as nodeFs from 'node:fs';
import { join } from 'node:path';
import { RuntimeFailure, UsageError } from '../util/errors.js';
import { stderrWarning } from '../util/stderr-warning.js';
import type { MicPair } from '../geometry/array-geometry.js';
import { eventColumns } from '../records/event-columns.js';
import type { GapRecord } from '../records/gap-record.js';
import { frameColumns } from '../records/frame-columns.js';
import type { EventRecord, FrameRecord } from '../records/record-types.js';
import { formatByteSize } from '../util/byte-size.js';
import { makeFolder } from '../util/folders.js';
import { validateStationId } from '../station/station-id.js';
import type { RecordSink } from './record-sink.js';
import { resolveRecordLogOptions, type LogFormat, type RecordLogOptions } from './record-log-options.js';
import { jsonObjectLine, LineFile, type LineFileFs, realFs, repairTail, type TailRepair } from './line-file.js';
import { csvFieldCount, csvHeader, csvRow, type CsvColumn } from '../records/csv.js';

/**
 * Log sink for frame, event and gap records: JSON Lines (or CSV) files in one directory.
 *
 * File names: STATION.KIND.YYYYMMDDTHHMMSSZ[_NNN].EXT, e.g. marsh-east.events.20250614T213000Z.jsonl,
 * where the time is the UTC time the file was opened and _001, _002, ... separate files opened
 * in the same second, so a plain sort of the names (ls, cat *.jsonl) is oldest first. A new file starts when the open one would pass the size limit, when the UTC
 * day changes, on reopen() (SIGHUP) and on every start. Each record is one write() of a whole
 * line; files are fsynced on a timer, on rotation and on close.
 */

export type RecordKind = 'frames' | 'events' | 'gaps';
export const RECORD_KINDS: readonly RecordKind[] = ['frames', 'events', 'gaps'];

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

const NAME = /^([A-Za-z0-9][A-Za-z0-9_-]{0,63})\.(frames|events|gaps)\.(\d{8}T\d{6}Z)(?:_(\d{3,}))?\.(jsonl|csv)$/;

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

/** Mic pairs (0,1), (0,2), ... (1,2), ... for the number of tdoa entries a frame carries. */
export function pairsForCount(count: number): MicPair[] {
  const mics = Math.round((1 + Math.sqrt(1 + 8 * count)) / 2);
  if ((mics * (mics - 1)) / 2 !== count) throw new Error(`internal: ${count} tdoa entries is no whole number of mic pairs`);
  const pairs: MicPair[] = [];
  for (let a = 0; a < mics; a++) for (let b = a + 1; b < mics; b++) pairs.push([a, b]);
  return pairs;
}

/** How a log file's lines are checked at start: JSON objects, or CSV rows as wide as the header. */
function lineCheck(path: string, format: LogFormat): (line: string) => boolean {
  if (format === 'jsonl') return jsonObjectLine;
  const head = Buffer.alloc(65536);
  const fd = nodeFs.openSync(path, 'r');
  let n: number;
  try {
    n = nodeFs.readSync(fd, head, 0, head.length, 0);
  } finally {
    nodeFs.closeSync(fd);
  }
  const nl = head.subarray(0, n).indexOf(0x0a);
  // Without a whole header line nothing in the file can be trusted: cut it all.
  if (nl < 0) return () => false;
  const columns = csvFieldCount(head.subarray(0, nl).toString('utf8'));
  return (line) => csvFieldCount(line) === columns;
}

/** Cut a torn or invalid last line off one log file (kept in PATH.torn). Null when it was whole. */
export function repairLogFile(path: string, keepCut = true): TailRepair | null {
  const slash = Math.max(path.lastIndexOf('/'), path.lastIndexOf('\\'));
  const f = parseLogFileName(path.slice(slash + 1));
  return repairTail(path, lineCheck(path, f?.format ?? 'jsonl'), keepCut);
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
  /**
   * CSV columns of frames (frameColumns(micPairs(geometry), hasHeading) in the live command).
   * Without them the columns follow the first frame: its pair count, and a bearing column when
   * it has a bearing.
   */
  frameColumns?: readonly CsvColumn<FrameRecord>[];
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

const GAP_COLUMNS: CsvColumn<GapRecord>[] = [
  { name: 'gap', get: (r) => r.gap },
  { name: 'start_s', get: (r) => r.start_s },
  { name: 'end_s', get: (r) => r.end_s },
  { name: 'utc', get: (r) => r.utc },
];

export class RecordLog implements RecordSink {
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
  private readonly counts: Record<RecordKind, number> = { frames: 0, events: 0, gaps: 0 };
  private lastFree: number | null = null;
  private lowSpaceWarned = false;
  private overLimitWarned = false;
  private failure: RuntimeFailure | null = null;
  private frameCols: readonly CsvColumn<FrameRecord>[] | null;
  private readonly eventCols = eventColumns();
  private lineBuf = Buffer.alloc(16 * 1024);
  private readonly headers: Partial<Record<RecordKind, string>> = {};
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
    this.warn = deps.onWarning ?? stderrWarning;
    this.fs = deps.fs ?? realFs;
    this.freeBytes = deps.freeBytes ?? statfsFree;
    this.frameCols = deps.frameColumns ?? null;
    try {
      makeFolder(this.dir);
      nodeFs.accessSync(this.dir, nodeFs.constants.W_OK);
    } catch (err) {
      // A folder that cannot be made or written at the start is a setting to fix (exit 2), not a failure that a restart cures.
      throw new UsageError(`cannot use log directory ${this.dir}: ${(err as Error).message}; create it or pick another --log-dir`);
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

  get wantsFrames(): boolean {
    return this.options.logFrames;
  }

  frame(record: FrameRecord): void {
    if (!this.options.logFrames) return;
    if (this.options.logFormat === 'jsonl') return this.write('frames', JSON.stringify(record), '');
    this.frameCols ??= frameColumns(pairsForCount(record.tdoa_s.length), record.bearing_deg !== undefined);
    this.write('frames', csvRow(this.frameCols, record), this.headerOf('frames', this.frameCols));
  }

  event(record: EventRecord): void {
    if (this.options.logFormat === 'jsonl') return this.write('events', JSON.stringify(record), '');
    this.write('events', csvRow(this.eventCols, record), this.headerOf('events', this.eventCols));
  }

  /** A capture gap (a stretch of lost audio), in its own log files next to the events. */
  gap(record: GapRecord): void {
    if (this.options.logFormat === 'jsonl') return this.write('gaps', JSON.stringify(record), '');
    this.write('gaps', csvRow(GAP_COLUMNS, record), this.headerOf('gaps', GAP_COLUMNS));
  }

  /** A kind's CSV header line, built once (its columns do not change during a run). */
  private headerOf<T>(kind: RecordKind, columns: readonly CsvColumn<T>[]): string {
    return (this.headers[kind] ??= csvHeader(columns));
  }

  /** The line (text + newline) in the log's one reusable buffer, grown only for a longer line. */
  private encode(text: string): Buffer {
    const len = Buffer.byteLength(text, 'utf8') + 1;
    if (len > this.lineBuf.length) this.lineBuf = Buffer.alloc(Math.max(len, 2 * this.lineBuf.length));
    this.lineBuf.write(text, 0, 'utf8');
    this.lineBuf[len - 1] = 0x0a;
    return this.lineBuf.subarray(0, len);
  }

  /** `header` is the CSV header line a new file starts with ('' for JSON Lines). */
  private write(kind: RecordKind, text: string, header: string): void {
    if (this.failure) throw this.failure;
    if (this.closed) throw new RuntimeFailure('internal: record log written after close');
    const line = this.encode(text);
    const now = this.clock();
    let f = this.open[kind];
    if (f && (f.day !== utcDay(now) || (f.lines > 0 && f.file.size + line.length > this.options.rotateSize))) {
      this.rotate(kind);
      f = undefined;
    }
    try {
      if (!f) {
        f = this.openFile(kind, now, header, line);
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
  private openFile(kind: RecordKind, now: number, header: string, firstLine: Buffer): OpenFile {
    const base = { station: this.station, kind, stamp: utcStamp(now), format: this.options.logFormat };
    // Never reuse the name of a file deleted in the same second: names must keep sorting oldest first.
    const last = this.lastOpened[kind];
    let n = last && last.stamp === base.stamp ? last.n + 1 : 0;
    while (nodeFs.existsSync(join(this.dir, formatLogFileName({ ...base, n })))) n++;
    const name: LogFileName = { ...base, n };
    this.lastOpened[kind] = name;
    const path = join(this.dir, formatLogFileName(name));
    const file = new LineFile(path, this.fs);
    const head = header === '' ? Buffer.alloc(0) : Buffer.from(header + '\n');
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

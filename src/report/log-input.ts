/**
 * The report's input files: the LOG arguments expanded (a folder stands for the station logs
 * in it: NAME.events.* and NAME.gaps.*, oldest first) and read line by line as a stream, so a
 * week of logs never sits in memory. The I/O edge of the report.
 */
import { createReadStream, openSync, readdirSync, readSync, closeSync, statSync, type Stats } from 'node:fs';
import { basename, join } from 'node:path';
import { createInterface } from 'node:readline';
import { UsageError } from '../util/errors.js';
import { compareLogFiles, parseLogFileName } from '../sinks/record-log.js';
import { formatOf, LogLineReader, type LogItem } from './log-records.js';

export interface LogInput {
  readonly path: string;
  readonly size: number;
  /** The station the file name gives (STATION.events.STAMP.jsonl), else null. */
  readonly station: string | null;
}

function statOf(path: string): Stats {
  try {
    return statSync(path);
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    if (code === 'ENOENT') throw new UsageError(`cannot read the log ${path}: it does not exist; check the path`);
    throw new UsageError(`cannot read the log ${path}: ${(err as Error).message}`);
  }
}

function folderLogs(dir: string): LogInput[] {
  let names: string[];
  try {
    names = readdirSync(dir);
  } catch (err) {
    throw new UsageError(`cannot list the folder ${dir}: ${(err as Error).message}`);
  }
  const logs = names
    .map((name) => ({ name, f: parseLogFileName(name) }))
    .filter((x) => x.f !== null && x.f.kind !== 'frames')
    .sort((a, b) => (a.f!.station < b.f!.station ? -1 : a.f!.station > b.f!.station ? 1 : compareLogFiles(a.f!, b.f!)));
  if (logs.length === 0) {
    throw new UsageError(`the folder ${dir} holds no station logs (NAME.events.YYYYMMDDTHHMMSSZ.jsonl or .csv); give the folder of a station's --log-dir or the log files`);
  }
  return logs.map(({ name, f }) => {
    const path = join(dir, name);
    return { path, size: statOf(path).size, station: f!.station };
  });
}

/** The files behind the LOG arguments, each once, in the order given (a folder's logs oldest first). */
export function listLogInputs(args: readonly string[]): LogInput[] {
  if (args.length === 0) throw new UsageError('give at least one event log (JSON Lines or CSV) or a folder of station logs');
  const out: LogInput[] = [];
  const seen = new Set<string>();
  for (const arg of args) {
    const st = statOf(arg);
    const found = st.isDirectory()
      ? folderLogs(arg)
      : st.isFile()
        ? [{ path: arg, size: st.size, station: parseLogFileName(basename(arg))?.station ?? null }]
        : (() => {
            throw new UsageError(`cannot read the log ${arg}: it is not a regular file or a folder (a device or FIFO?); give a log file`);
          })();
    for (const f of found) {
      if (seen.has(f.path)) continue;
      seen.add(f.path);
      out.push(f);
    }
  }
  return out;
}

function firstBytes(path: string, n: number): string {
  const buf = Buffer.alloc(n);
  const fd = openSync(path, 'r');
  try {
    return buf.subarray(0, readSync(fd, buf, 0, n, 0)).toString('utf8');
  } finally {
    closeSync(fd);
  }
}

function endsWithNewline(path: string, size: number): boolean {
  if (size === 0) return true;
  const buf = Buffer.alloc(1);
  const fd = openSync(path, 'r');
  try {
    readSync(fd, buf, 0, 1, size - 1);
  } finally {
    closeSync(fd);
  }
  return buf[0] === 0x0a;
}

/**
 * Read one log and hand every item to `onItem`, in file order. `onBytes` hears the bytes read
 * (for a progress bar). A bad line is a UsageError naming file and line, except a last line cut
 * short (no newline at the end: a station still writing, or cut off), which `onWarning` hears
 * and which is skipped.
 */
export async function readLogItems(input: LogInput, onItem: (item: LogItem) => void, onBytes: (n: number) => void, onWarning: (message: string) => void): Promise<void> {
  const reader = new LogLineReader(formatOf(input.path, firstBytes(input.path, 256)), input.path);
  const stream = createReadStream(input.path, { highWaterMark: 1 << 20 });
  stream.on('data', (chunk) => onBytes(chunk.length));
  const lines = createInterface({ input: stream, crlfDelay: Infinity });
  let lineNo = 0;
  let held: UsageError | null = null;
  try {
    for await (const line of lines) {
      if (held) throw held;
      lineNo++;
      try {
        const item = reader.read(line, lineNo);
        if (item) onItem(item);
      } catch (err) {
        if (!(err instanceof UsageError)) throw err;
        held = err;
      }
    }
  } catch (err) {
    if (err instanceof UsageError) throw err;
    throw new UsageError(`cannot read the log ${input.path}: ${(err as Error).message}`);
  } finally {
    lines.close();
    stream.destroy();
  }
  if (held) {
    if (endsWithNewline(input.path, input.size)) throw held;
    onWarning(`${input.path}: the last line is cut short (no newline at the end: a log still being written?); it was skipped (${held.message.replace(/^.*?: /, '')})`);
  }
}

import { createWriteStream, type WriteStream } from 'node:fs';
import { finished } from 'node:stream/promises';
import { RuntimeFailure } from '../util/errors.js';
import { csvHeader, csvRow, type CsvColumn } from '../records/csv.js';
import { abandonOutput, commitOutput, openOutputFd, type OutputTarget } from './output-target.js';

export type RecordFormat = 'jsonl' | 'csv';

/**
 * Writes records as JSON Lines or CSV to stdout or to an output planned by planOutput
 * (output-target.ts): a file is written aside and renamed over its target only by close();
 * abandon() deletes the partial file (the target keeps what it held); keepAside() stops and
 * leaves the partial file where it is (for records that exist nowhere else, e.g. live capture).
 * A FIFO or device is written straight through.
 */
export class RecordWriter<T extends object> {
  private readonly stream: NodeJS.WritableStream;
  private readonly file: WriteStream | null;
  private failed: Error | null = null;
  private headerDone = false;
  private draining: Promise<void> | null = null;
  private ended: Promise<void> | null = null;
  private settled = false;
  /** Records written so far. */
  records = 0;

  private constructor(
    readonly target: OutputTarget | null,
    readonly format: RecordFormat,
    private readonly columns: readonly CsvColumn<T>[],
  ) {
    if (target === null) {
      this.file = null;
      this.stream = process.stdout;
    } else {
      // A partial file is created at once (exclusively); a FIFO is opened in the background,
      // as its reader may come later.
      const ws = target.through ? createWriteStream(target.writePath, { flags: 'a' }) : createWriteStream('', { fd: openOutputFd(target) });
      ws.on('error', (err) => {
        this.failed = err;
      });
      this.file = ws;
      this.stream = ws;
    }
  }

  /** Records to `target`, or to stdout when it is null. */
  static open<T extends object>(target: OutputTarget | null, format: RecordFormat, columns: readonly CsvColumn<T>[]): RecordWriter<T> {
    return new RecordWriter<T>(target, format, columns);
  }

  /** What the records go to, for messages. */
  get name(): string {
    return this.target?.path ?? 'stdout';
  }

  /** Write one record; returns a promise only when the output asks to wait (back-pressure). */
  write(rec: T): Promise<void> | undefined {
    if (this.failed) throw this.failure();
    this.records++;
    let line: string;
    if (this.format === 'jsonl') line = JSON.stringify(rec) + '\n';
    else {
      if (!this.headerDone) {
        this.stream.write(csvHeader(this.columns) + '\n');
        this.headerDone = true;
      }
      line = csvRow(this.columns, rec) + '\n';
    }
    if (this.stream.write(line)) return this.draining ?? undefined;
    // One wait per full buffer, however many records are written before it drains. A stream
    // that fails never drains: the wait ends then too, and the next write or close() throws.
    this.draining ??= new Promise<void>((res) => {
      const done = (): void => {
        this.stream.off('drain', done);
        this.stream.off('error', done);
        this.stream.off('close', done);
        this.draining = null;
        res();
      };
      this.stream.on('drain', done);
      this.stream.on('error', done);
      this.stream.on('close', done);
    });
    return this.draining;
  }

  private failure(): RuntimeFailure {
    return new RuntimeFailure(`writing ${this.name} failed (${this.failed?.message})`);
  }

  /** Flush and close the file (or FIFO); errors are kept in `failed`. */
  private end(): Promise<void> {
    const ws = this.file;
    this.ended ??= ws === null ? Promise.resolve() : finished(ws.end()).catch((err: unknown) => {
      this.failed ??= err as Error;
    });
    return this.ended;
  }

  /**
   * Finish: flush, and move the partial file over the target. A write that failed is thrown
   * as a RuntimeFailure and the partial file is left for abandon() or keepAside().
   */
  async close(): Promise<void> {
    if (this.format === 'csv' && !this.headerDone && !this.failed) {
      this.stream.write(csvHeader(this.columns) + '\n');
      this.headerDone = true;
    }
    await this.end();
    if (this.failed) throw this.failure();
    if (this.target && !this.settled) {
      this.settled = true;
      commitOutput(this.target);
    }
  }

  /** Stop after a failure (here or elsewhere): delete the partial file; the target keeps what it held. */
  async abandon(): Promise<void> {
    await this.end();
    if (this.target && !this.settled) {
      this.settled = true;
      abandonOutput(this.target);
    }
  }

  /**
   * Stop after a failure but keep the records written so far in the partial file, beside the
   * untouched target. Returns its path (null for stdout, for outputs written through, and when
   * no record was written: then the partial file is abandoned).
   */
  async keepAside(): Promise<string | null> {
    if (this.records === 0) {
      await this.abandon();
      return null;
    }
    await this.end();
    if (!this.target || this.target.through || this.settled) return null;
    this.settled = true;
    return this.target.writePath;
  }
}

import { createWriteStream, type WriteStream } from 'node:fs';
import { finished } from 'node:stream/promises';
import { RuntimeFailure } from '../util/errors.js';
import { csvHeader, csvRow, type CsvColumn } from '../records/csv.js';
import type { GapRecord } from '../records/gap-record.js';
import type { EventRecord, FrameRecord } from '../records/record-types.js';
import { abandonOutput, commitOutput, openOutputFd, type OutputTarget } from './output-target.js';
import type { RecordSink, SinkResult } from './record-sink.js';

export type RecordFormat = 'jsonl' | 'csv';

/** How each record kind becomes a line; a kind without one is not written by this writer. */
interface Lines {
  readonly frame: ((rec: FrameRecord) => string) | null;
  readonly event: ((rec: EventRecord) => string) | null;
  readonly gap: ((rec: GapRecord) => string) | null;
}

const json = (rec: object): string => JSON.stringify(rec);

/**
 * A record sink that writes JSON Lines or CSV to stdout or to an output planned by planOutput
 * (output-target.ts): a file is written aside and renamed over its target only by close();
 * abandon() deletes the partial file (the target keeps what it held); keepAside() stops and
 * leaves the partial file where it is (for records that exist nowhere else, e.g. live capture).
 * A FIFO or device is written straight through. JSON Lines may mix kinds (events and gaps,
 * with frames or without); a CSV file holds one kind under its header.
 */
export class RecordWriter implements RecordSink {
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
    private readonly lines: Lines,
    /** The CSV header line, written before the first record (or at close when there is none); null for JSON Lines. */
    private readonly header: string | null,
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

  /** JSON Lines of the kinds asked for, to `target` or to stdout when it is null. */
  static jsonLines(target: OutputTarget | null, kinds: { frames?: boolean; events?: boolean; gaps?: boolean }): RecordWriter {
    return new RecordWriter(target, { frame: kinds.frames ? json : null, event: kinds.events ? json : null, gap: kinds.gaps ? json : null }, null);
  }

  /** CSV of frame records. */
  static csvFrames(target: OutputTarget | null, columns: readonly CsvColumn<FrameRecord>[]): RecordWriter {
    return new RecordWriter(target, { frame: (r) => csvRow(columns, r), event: null, gap: null }, csvHeader(columns));
  }

  /** CSV of event records. */
  static csvEvents(target: OutputTarget | null, columns: readonly CsvColumn<EventRecord>[]): RecordWriter {
    return new RecordWriter(target, { frame: null, event: (r) => csvRow(columns, r), gap: null }, csvHeader(columns));
  }

  /** What the records go to, for messages. */
  get name(): string {
    return this.target?.path ?? 'stdout';
  }

  get wantsFrames(): boolean {
    return this.lines.frame !== null;
  }

  frame(rec: FrameRecord): SinkResult {
    return this.lines.frame ? this.writeLine(this.lines.frame(rec)) : undefined;
  }

  event(rec: EventRecord): SinkResult {
    return this.lines.event ? this.writeLine(this.lines.event(rec)) : undefined;
  }

  gap(rec: GapRecord): SinkResult {
    return this.lines.gap ? this.writeLine(this.lines.gap(rec)) : undefined;
  }

  /** Write one line; returns a promise only when the output asks to wait (back-pressure). */
  private writeLine(text: string): Promise<void> | undefined {
    if (this.failed) throw this.failure();
    this.records++;
    if (this.header !== null && !this.headerDone) {
      this.stream.write(this.header + '\n');
      this.headerDone = true;
    }
    if (this.stream.write(text + '\n')) return this.draining ?? undefined;
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
    if (this.header !== null && !this.headerDone && !this.failed) {
      this.stream.write(this.header + '\n');
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

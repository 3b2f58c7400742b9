import { createWriteStream, existsSync, renameSync, type WriteStream } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { RuntimeFailure, UsageError } from '../errors.js';

export type RecordFormat = 'jsonl' | 'csv';

/** A CSV column: a header name and how to get its value from a record. */
export interface CsvColumn<T> {
  readonly name: string;
  readonly get: (rec: T) => number | string | boolean | null | undefined;
}

export function csvCell(v: number | string | boolean | null | undefined): string {
  if (v === null || v === undefined) return '';
  if (typeof v === 'string') return /[",\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v;
  return String(v);
}

export function parseFormat(raw: string): RecordFormat {
  if (raw === 'jsonl' || raw === 'csv') return raw;
  throw new UsageError(`--format ${raw} is not known: use jsonl or csv`);
}

/**
 * Writes records as JSON Lines or CSV to stdout or a file. A file is written as PATH.partial
 * and renamed over PATH only when complete, so an existing file is never left half-replaced;
 * on failure the partial file stays and the message says where.
 */
export class RecordWriter<T extends object> {
  private readonly stream: NodeJS.WritableStream;
  private readonly partialPath: string | null;
  private failed: Error | null = null;
  private headerDone = false;
  private draining: Promise<void> | null = null;

  private constructor(
    readonly path: string | null,
    readonly format: RecordFormat,
    private readonly columns: readonly CsvColumn<T>[],
    protectedInputs: readonly string[],
  ) {
    if (path === null || path === '-') {
      this.path = null;
      this.partialPath = null;
      this.stream = process.stdout;
    } else {
      const abs = resolve(path);
      if (protectedInputs.some((p) => resolve(p) === abs)) {
        throw new UsageError(`--out ${path} is one of the inputs: choose another output file`);
      }
      if (!existsSync(dirname(abs))) throw new UsageError(`cannot write ${path}: the folder ${dirname(abs)} does not exist`);
      this.partialPath = `${abs}.partial`;
      const ws: WriteStream = createWriteStream(this.partialPath);
      ws.on('error', (err) => {
        this.failed = err;
      });
      this.stream = ws;
    }
  }

  static open<T extends object>(path: string | null, format: RecordFormat, columns: readonly CsvColumn<T>[], protectedInputs: readonly string[] = []): RecordWriter<T> {
    return new RecordWriter<T>(path, format, columns, protectedInputs);
  }

  /** Write one record; returns a promise only when the output asks to wait (back-pressure). */
  write(rec: T): Promise<void> | undefined {
    if (this.failed) throw this.failure();
    let line: string;
    if (this.format === 'jsonl') line = JSON.stringify(rec) + '\n';
    else {
      if (!this.headerDone) {
        this.stream.write(this.columns.map((c) => c.name).join(',') + '\n');
        this.headerDone = true;
      }
      line = this.columns.map((c) => csvCell(c.get(rec))).join(',') + '\n';
    }
    if (this.stream.write(line)) return this.draining ?? undefined;
    // One wait per full buffer, however many records are written before it drains.
    this.draining ??= new Promise<void>((res) =>
      this.stream.once('drain', () => {
        this.draining = null;
        res();
      }),
    );
    return this.draining;
  }

  private failure(): RuntimeFailure {
    return new RuntimeFailure(`writing ${this.path ?? 'stdout'} failed (${this.failed?.message}); what was written so far is in ${this.partialPath ?? 'stdout'}`);
  }

  /** Finish: flush, and move the partial file into place. */
  async close(): Promise<void> {
    if (this.format === 'csv' && !this.headerDone) {
      this.stream.write(this.columns.map((c) => c.name).join(',') + '\n');
      this.headerDone = true;
    }
    if (this.partialPath === null) return;
    const ws = this.stream as WriteStream;
    await new Promise<void>((res) => ws.end(() => res()));
    if (this.failed) throw this.failure();
    renameSync(this.partialPath, this.path!);
  }

  /** Stop after a failure elsewhere: keep what was written in the partial file. */
  async abandon(): Promise<string | null> {
    if (this.partialPath === null) return null;
    const ws = this.stream as WriteStream;
    await new Promise<void>((res) => ws.end(() => res()));
    return this.partialPath;
  }
}

import * as nodeFs from 'node:fs';
import { join } from 'node:path';
import { UsageError } from '../util/errors.js';
import { formatByteSize } from '../util/byte-size.js';
import { makeFolder } from '../util/folders.js';
import { LockHeld, takePidLock, type PidLock } from '../util/pid-lock.js';
import { jsonObjectLine, LineFile, repairTail } from './line-file.js';

/**
 * A disk-backed FIFO of JSON messages, each with a sequence number `seq` that keeps growing
 * across restarts. Messages are appended to JSON Lines segment files (seg-<first seq>.jsonl)
 * and fsynced before push() returns; done(seq) marks one as delivered. The highest seq below
 * which everything is delivered is kept in delivered.json (written at most once a second, on
 * segment removal and on close); a segment is removed once all of it is delivered. After a
 * crash, messages delivered in the last second are sent again: receivers de-duplicate by seq.
 *
 * The queue is bounded: when the undelivered messages pass maxBytes, the oldest ones that are
 * not being sent are dropped, with a warning.
 *
 * One process at a time: a lock file with the owner's pid (util/pid-lock.ts) guards the folder;
 * a lock left by a dead process is taken over with a warning. A damaged segment line (not a JSON
 * object, or without a whole-number seq) is moved aside to damaged-<segment> with a warning and
 * the rest is sent; seq continues after the highest good one.
 */

export interface QueueItem {
  seq: number;
  /** The message as one JSON line without the newline. */
  text: string;
  state: 'waiting' | 'sending' | 'done';
}

export interface DiskQueueOptions {
  maxBytes: number;
  onWarning: (message: string) => void;
  clock?: () => number;
}

const SEGMENT = /^seg-(\d{12})\.jsonl$/;
const STATE_FILE = 'delivered.json';
export const QUEUE_LOCK_FILE = 'lock';

/** The seq of a queued line, or null when the line is damaged (not a JSON object, or no whole-number seq >= 1). */
function seqOf(text: string): number | null {
  try {
    const v: unknown = JSON.parse(text);
    if (typeof v !== 'object' || v === null || Array.isArray(v)) return null;
    const seq = (v as { seq?: unknown }).seq;
    return typeof seq === 'number' && Number.isSafeInteger(seq) && seq >= 1 ? seq : null;
  } catch {
    return null;
  }
}

interface Segment {
  path: string;
  firstSeq: number;
  lastSeq: number;
}

export class DiskQueue {
  private readonly items: QueueItem[] = [];
  private readonly segments: Segment[] = [];
  private current: LineFile | null = null;
  private nextSeq = 1;
  /** Everything with seq <= delivered has been delivered (or dropped). */
  private delivered = 0;
  private savedDelivered = 0;
  private bytes = 0;
  private readonly segmentBytes: number;
  private readonly clock: () => number;
  private dropped = 0;
  private droppedSinceWarning = 0;
  private lastDropWarning = -Infinity;
  private saveTimer: NodeJS.Timeout;
  private readonly lock: PidLock;

  constructor(
    readonly dir: string,
    private readonly options: DiskQueueOptions,
  ) {
    this.clock = options.clock ?? Date.now;
    this.segmentBytes = Math.min(4 * 1024 ** 2, Math.max(64 * 1024, Math.floor(options.maxBytes / 8)));
    try {
      makeFolder(dir);
      this.lock = takePidLock(join(dir, QUEUE_LOCK_FILE));
    } catch (err) {
      if (err instanceof LockHeld) {
        throw new UsageError(
          `the MQTT queue ${dir} is in use by process ${err.pid} (another bearline for the same station?); stop that one, or give this one another --station`,
        );
      }
      throw new UsageError(`cannot use the MQTT queue folder ${dir}: ${(err as Error).message}; pick another --mqtt-queue-dir`);
    }
    if (this.lock.tookOverFrom !== null) {
      const who = this.lock.tookOverFrom > 0 ? `process ${this.lock.tookOverFrom}, which is gone` : 'a process that left it unreadable';
      options.onWarning(`the MQTT queue ${dir} was locked by ${who}; taking it over`);
    }
    try {
      this.load();
    } catch (err) {
      this.lock.release();
      throw err;
    }
    this.saveTimer = setInterval(() => this.saveDelivered(), 1000);
    this.saveTimer.unref();
  }

  private load(): void {
    try {
      const state = JSON.parse(nodeFs.readFileSync(join(this.dir, STATE_FILE), 'utf8')) as { delivered_seq?: unknown };
      if (typeof state.delivered_seq === 'number' && Number.isSafeInteger(state.delivered_seq)) this.delivered = state.delivered_seq;
    } catch {
      // No state yet (first run) or unreadable: start from what the segments hold.
    }
    this.savedDelivered = this.delivered;
    const names = nodeFs.readdirSync(this.dir).filter((n) => SEGMENT.test(n)).sort();
    let maxSeq = this.delivered;
    names.forEach((name, i) => {
      const path = join(this.dir, name);
      if (i === names.length - 1) {
        const r = repairTail(path, jsonObjectLine);
        if (r) this.options.onWarning(`MQTT queue segment ${path} ended in a torn line; cut ${r.cutBytes} bytes${r.keptAt ? `, kept in ${r.keptAt}` : ''}`);
      }
      const seg: Segment = { path, firstSeq: Number(SEGMENT.exec(name)![1]), lastSeq: 0 };
      const lines = nodeFs.readFileSync(path, 'utf8').split('\n').filter((t) => t !== '');
      const damaged = lines.filter((t) => seqOf(t) === null);
      if (damaged.length > 0) this.moveAside(path, name, lines, damaged);
      for (const text of lines) {
        const seq = seqOf(text);
        if (seq === null) continue;
        seg.lastSeq = Math.max(seg.lastSeq, seq);
        maxSeq = Math.max(maxSeq, seq);
        if (seq > this.delivered) {
          this.items.push({ seq, text, state: 'waiting' });
          this.bytes += Buffer.byteLength(text) + 1;
        }
      }
      this.segments.push(seg);
    });
    this.nextSeq = maxSeq + 1;
    this.removeDeliveredSegments();
  }

  /**
   * Move the damaged lines of a segment to damaged-<segment> in the same folder (appended, so
   * nothing is lost over several starts) and rewrite the segment with the good ones.
   */
  private moveAside(path: string, name: string, lines: readonly string[], damaged: readonly string[]): void {
    const aside = join(this.dir, `damaged-${name}`);
    nodeFs.appendFileSync(aside, damaged.map((t) => t + '\n').join(''));
    const tmp = `${path}.tmp`;
    const fd = nodeFs.openSync(tmp, 'w');
    try {
      nodeFs.writeSync(fd, lines.filter((t) => seqOf(t) !== null).map((t) => t + '\n').join(''));
      nodeFs.fsyncSync(fd);
    } finally {
      nodeFs.closeSync(fd);
    }
    nodeFs.renameSync(tmp, path);
    this.options.onWarning(
      `MQTT queue segment ${path}: ${damaged.length} damaged line(s) (not JSON, or no seq) moved to ${aside}; the rest will be sent`,
    );
  }

  /** Number of undelivered messages. */
  get length(): number {
    return this.items.filter((i) => i.state !== 'done').length;
  }

  get droppedCount(): number {
    return this.dropped;
  }

  /** Add a message; `build` gets the seq and returns the JSON text (one line). */
  push(build: (seq: number) => string): QueueItem {
    const seq = this.nextSeq;
    const text = build(seq);
    if (text.includes('\n')) throw new Error('internal: queue message spans lines');
    const size = Buffer.byteLength(text) + 1;
    this.makeRoom(size);
    if (!this.current || this.current.size + size > this.segmentBytes) this.startSegment(seq);
    this.current!.append(Buffer.from(text + '\n'));
    this.current!.sync();
    this.segments[this.segments.length - 1]!.lastSeq = seq;
    this.nextSeq++;
    const item: QueueItem = { seq, text, state: 'waiting' };
    this.items.push(item);
    this.bytes += size;
    return item;
  }

  private startSegment(firstSeq: number): void {
    this.current?.close();
    const path = join(this.dir, `seg-${String(firstSeq).padStart(12, '0')}.jsonl`);
    this.current = new LineFile(path);
    this.segments.push({ path, firstSeq, lastSeq: firstSeq });
  }

  private makeRoom(size: number): void {
    if (this.bytes + size <= this.options.maxBytes) return;
    let first = -1;
    let last = -1;
    let n = 0;
    for (const item of this.items) {
      if (this.bytes + size <= this.options.maxBytes) break;
      if (item.state !== 'waiting') continue;
      item.state = 'done';
      this.bytes -= Buffer.byteLength(item.text) + 1;
      if (first < 0) first = item.seq;
      last = item.seq;
      n++;
    }
    if (n === 0) return;
    this.dropped += n;
    this.droppedSinceWarning += n;
    this.advance();
    const now = this.clock();
    if (now - this.lastDropWarning >= 60_000) {
      this.options.onWarning(
        `MQTT queue is full (${formatByteSize(this.options.maxBytes)}): dropped ${this.droppedSinceWarning} oldest unsent event(s), last dropped seq ${last}${first !== last ? ` (from ${first})` : ''}; raise --mqtt-queue-max or check the broker`,
      );
      this.lastDropWarning = now;
      this.droppedSinceWarning = 0;
    }
  }

  /** The waiting messages in order, oldest first. */
  *waiting(): Generator<QueueItem> {
    for (const item of this.items) if (item.state === 'waiting') yield item;
  }

  /** Mark one message delivered. */
  done(item: QueueItem): void {
    if (item.state === 'done') return;
    item.state = 'done';
    this.bytes -= Buffer.byteLength(item.text) + 1;
    this.advance();
  }

  private advance(): void {
    let k = 0;
    while (k < this.items.length && this.items[k]!.state === 'done') k++;
    if (k === 0) return;
    this.delivered = this.items[k - 1]!.seq;
    this.items.splice(0, k);
    if (this.segments.length > 1 && this.segments[0]!.lastSeq <= this.delivered) this.removeDeliveredSegments();
  }

  private removeDeliveredSegments(): void {
    let removed = false;
    // The newest segment stays: it is the one being written.
    while (this.segments.length > 1 && this.segments[0]!.lastSeq <= this.delivered) {
      nodeFs.rmSync(this.segments.shift()!.path, { force: true });
      removed = true;
    }
    if (removed) this.saveDelivered();
  }

  private saveDelivered(): void {
    if (this.delivered === this.savedDelivered) return;
    const tmp = join(this.dir, `${STATE_FILE}.tmp`);
    try {
      const fd = nodeFs.openSync(tmp, 'w');
      try {
        nodeFs.writeSync(fd, JSON.stringify({ delivered_seq: this.delivered }) + '\n');
        nodeFs.fsyncSync(fd);
      } finally {
        nodeFs.closeSync(fd);
      }
      nodeFs.renameSync(tmp, join(this.dir, STATE_FILE));
      this.savedDelivered = this.delivered;
    } catch (err) {
      this.options.onWarning(`cannot save MQTT queue state in ${this.dir}: ${(err as Error).message}; events may be sent twice after a restart`);
    }
  }

  close(): void {
    clearInterval(this.saveTimer);
    this.saveDelivered();
    this.current?.close();
    this.current = null;
    this.lock.release();
  }
}

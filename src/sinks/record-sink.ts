/**
 * Where records go: one interface for every sink (the record writer for stdout and --out, the
 * rotating log, MQTT, the live feed), and a fan-out that hands each record to several.
 */
import type { GapRecord } from '../records/gap-record.js';
import type { EventRecord, FrameRecord } from '../records/record-types.js';

/** What a sink's methods return: a promise only when the caller should wait (back-pressure). */
export type SinkResult = void | Promise<void>;

export interface RecordSink {
  /** What the records go to, for messages: 'stdout', 'log files in DIR', ... */
  readonly name: string;
  /** True when the sink takes frame records (one per hop): the caller makes them only then. */
  readonly wantsFrames: boolean;
  frame(rec: FrameRecord): SinkResult;
  event(rec: EventRecord): SinkResult;
  /** A stretch of lost live audio (records/gap-record.ts). */
  gap(rec: GapRecord): SinkResult;
  /** Flush and finish; after it, nothing more is written. */
  close(): SinkResult;
  /** Start new files (SIGHUP), for sinks that write files that outside tools rotate. */
  reopen?(): SinkResult;
}

/** Settles when every promise in `results` has, or returns nothing when none is a promise. */
function settleAll(results: readonly SinkResult[]): SinkResult {
  const waits = results.filter((r): r is Promise<void> => r instanceof Promise);
  if (waits.length === 0) return undefined;
  return Promise.all(waits).then(() => undefined);
}

/**
 * One sink that hands every record to each of `sinks`, in order (frames only to those that
 * want them). close() closes them all, in order, even when one fails; the first failure is
 * thrown after the rest are closed.
 */
export function fanOut(sinks: readonly RecordSink[], name = sinks.map((s) => s.name).join(', ')): RecordSink {
  const framed = sinks.filter((s) => s.wantsFrames);
  return {
    name,
    wantsFrames: framed.length > 0,
    frame: (rec) => settleAll(framed.map((s) => s.frame(rec))),
    event: (rec) => settleAll(sinks.map((s) => s.event(rec))),
    gap: (rec) => settleAll(sinks.map((s) => s.gap(rec))),
    async close() {
      let failure: unknown = null;
      for (const s of sinks) {
        try {
          await s.close();
        } catch (err) {
          failure ??= err;
        }
      }
      if (failure !== null) throw failure;
    },
    async reopen() {
      for (const s of sinks) await s.reopen?.();
    },
  };
}

/** A sink made of callbacks (a record kind without one is dropped), e.g. lines on a terminal. */
export function callbackSink(name: string, on: { frame?: (rec: FrameRecord) => SinkResult; event?: (rec: EventRecord) => SinkResult; gap?: (rec: GapRecord) => SinkResult }): RecordSink {
  return {
    name,
    wantsFrames: on.frame !== undefined,
    frame: (rec) => on.frame?.(rec),
    event: (rec) => on.event?.(rec),
    gap: (rec) => on.gap?.(rec),
    close: () => undefined,
  };
}

/** How many records of each kind went into a sink. */
export interface RecordCounts {
  frames: number;
  events: number;
  gaps: number;
}

/** A sink that counts the records it hands on to `sink`, for the final message of a run. */
export function countingSink(sink: RecordSink): { sink: RecordSink; counts: RecordCounts } {
  const counts: RecordCounts = { frames: 0, events: 0, gaps: 0 };
  return {
    counts,
    sink: {
      name: sink.name,
      wantsFrames: sink.wantsFrames,
      frame: (rec) => {
        counts.frames++;
        return sink.frame(rec);
      },
      event: (rec) => {
        counts.events++;
        return sink.event(rec);
      },
      gap: (rec) => {
        counts.gaps++;
        return sink.gap(rec);
      },
      close: () => sink.close(),
      reopen: sink.reopen ? () => sink.reopen!() : undefined,
    },
  };
}

/** '12 events, 1 gap, 800 frames' (gaps and frames only when there were any): what a run wrote, for its last line. */
export function describeCounts(c: RecordCounts): string {
  const n = (k: number, one: string): string => `${k} ${one}${k === 1 ? '' : 's'}`;
  return [n(c.events, 'event'), ...(c.gaps > 0 ? [n(c.gaps, 'gap')] : []), ...(c.frames > 0 ? [n(c.frames, 'frame')] : [])].join(', ');
}

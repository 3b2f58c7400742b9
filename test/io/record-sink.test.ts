/** The one sink interface and its fan-out (src/sinks/record-sink.ts). */
import { describe, expect, it } from 'vitest';
import type { GapRecord } from '../../src/records/gap-record.js';
import type { EventRecord, FrameRecord } from '../../src/records/record-types.js';
import { callbackSink, fanOut, type RecordSink } from '../../src/sinks/record-sink.js';

const frame: FrameRecord = { time_s: 1, azimuth_deg: 10, elevation_deg: null, confidence: 0.9, tdoa_s: [0.0001], level_dbfs: -20 };
const event: EventRecord = { start_s: 1, end_s: 2, azimuth_deg: 10, spread_deg: 1, confidence: 0.9, track: 1 };
const gap: GapRecord = { gap: 'arecord exited with code 1', start_s: 3, end_s: 4 };

function recorder(name: string, wantsFrames: boolean, log: string[], extra: Partial<RecordSink> = {}): RecordSink {
  return {
    name,
    wantsFrames,
    frame: () => void log.push(`${name} frame`),
    event: () => void log.push(`${name} event`),
    gap: (g) => void log.push(`${name} gap ${g.gap}`),
    close: () => void log.push(`${name} close`),
    ...extra,
  };
}

describe('fanOut: one sink that hands every record to several', () => {
  it('frames only to the sinks that want them, events and gaps to all, in order', () => {
    const log: string[] = [];
    const all = fanOut([recorder('file', false, log), recorder('feed', true, log)]);
    expect(all.wantsFrames).toBe(true);
    expect(all.name).toBe('file, feed');
    expect(all.frame(frame)).toBeUndefined();
    all.event(event);
    all.gap(gap);
    expect(log).toEqual(['feed frame', 'file event', 'feed event', 'file gap arecord exited with code 1', 'feed gap arecord exited with code 1']);
    expect(fanOut([recorder('file', false, [])]).wantsFrames).toBe(false);
  });

  it('waits when a sink asks to (back-pressure), and only then', async () => {
    let release = (): void => undefined;
    const slow = recorder('slow', false, [], { event: () => new Promise<void>((r) => (release = r)) });
    const all = fanOut([slow, recorder('fast', false, [])]);
    const wait = all.event(event);
    expect(wait).toBeInstanceOf(Promise);
    let done = false;
    void (wait as Promise<void>).then(() => (done = true));
    await new Promise((r) => setTimeout(r, 10));
    expect(done).toBe(false);
    release();
    await wait;
    expect(done).toBe(true);
  });

  it('closes every sink even when one fails, then throws the first failure', async () => {
    const log: string[] = [];
    const all = fanOut([
      recorder('a', false, log),
      recorder('b', false, log, {
        close: () => {
          throw new Error('disk full');
        },
      }),
      recorder('c', false, log),
    ]);
    await expect(Promise.resolve(all.close())).rejects.toThrow('disk full');
    expect(log).toEqual(['a close', 'c close']);
  });

  it('callbackSink: a record kind without a callback is dropped; it wants frames only with a frame callback', () => {
    const seen: string[] = [];
    const s = callbackSink('terminal', { event: (e) => void seen.push(`event ${e.track}`) });
    expect(s.wantsFrames).toBe(false);
    s.frame(frame);
    s.gap(gap);
    s.event(event);
    expect(seen).toEqual(['event 1']);
  });
});

import { describe, expect, it } from 'vitest';
import { OutboundQueue } from '../../src/feed/outbound-queue.js';

describe('outbound queue of one viewer', () => {
  it('keeps at most its bound of frames, dropping the oldest, and counts the drops', () => {
    const q = new OutboundQueue(3);
    const dropped = [1, 2, 3, 4, 5].map((i) => q.push('frame', `f${i}`));
    expect(dropped).toEqual([0, 0, 0, 1, 1]);
    expect(q.framesWaiting).toBe(3);
    expect(q.dropped).toBe(2);
    expect([q.shift(), q.shift(), q.shift(), q.shift()]).toEqual(['f3', 'f4', 'f5', undefined]);
  });

  it('never drops events, and keeps their order among the frames', () => {
    const q = new OutboundQueue(2);
    q.push('frame', 'f1');
    q.push('keep', 'e1');
    q.push('frame', 'f2');
    q.push('frame', 'f3');
    q.push('keep', 'e2');
    q.push('frame', 'f4');
    expect(q.keptWaiting).toBe(2);
    expect(q.dropped).toBe(2);
    const out: string[] = [];
    for (let s = q.shift(); s !== undefined; s = q.shift()) out.push(s);
    expect(out).toEqual(['e1', 'f3', 'e2', 'f4']);
  });

  it('holds one status at a time, the newest', () => {
    const q = new OutboundQueue(4);
    q.push('status', 's1');
    q.push('frame', 'f1');
    q.push('status', 's2');
    expect(q.length).toBe(2);
    expect(q.chars).toBe(4);
    expect([q.shift(), q.shift()]).toEqual(['s2', 'f1']);
  });
});

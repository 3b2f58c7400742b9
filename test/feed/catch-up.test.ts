/**
 * A viewer that joins late (issue 16, item 3): right after hello it gets the recent events (at
 * most the last 200, none older than 10 minutes of stream time) and the tracks heard in that
 * window, then live data. Checked over a real WebSocket against the records pushed in.
 */
import { afterEach, describe, expect, it } from 'vitest';
import { startFeedServer, type FeedServer } from '../../src/feed/feed-server.js';
import { MAX_EVENTS, WINDOW_S } from '../../src/feed/recent-history.js';
import type { EventRecord, FrameRecord } from '../../src/records/record-types.js';
import { fakeGeometry } from '../helpers/feed-fake.js';
import { probe, type Probe } from '../helpers/ws-probe.js';

const servers: FeedServer[] = [];
const probes: Probe[] = [];
afterEach(async () => {
  for (const p of probes.splice(0)) p.ws.terminate();
  for (const s of servers.splice(0)) await s.close();
});

function call(t: number, track: number, az: number): EventRecord {
  return { start_s: t, end_s: t + 0.3, azimuth_deg: az, spread_deg: 1.5, confidence: 0.9, track };
}

function hop(t: number, sources: { track: number; az: number }[]): FrameRecord {
  return {
    time_s: t,
    azimuth_deg: sources[0]?.az ?? null,
    elevation_deg: null,
    confidence: 0.9,
    tdoa_s: [0, 0, 0, 0, 0, 0],
    level_dbfs: -30,
    sources: sources.map((s) => ({ azimuth_deg: s.az, elevation_deg: null, score: 0.8, track: s.track })),
  };
}

async function joinLate(server: FeedServer): Promise<Probe> {
  const p = probe(server.feedUrl);
  probes.push(p);
  await p.waitFor((m) => m.some((x) => x.type === 'catch_up'), 'catch_up');
  return p;
}

describe('a viewer that joins late catches up', () => {
  it('gets the events of the last 10 minutes (not older), the tracks with their calls and last direction, then live data', async () => {
    const server = await startFeedServer({ port: 0, geometry: fakeGeometry(30) });
    servers.push(server);
    // 25 minutes of a chorus (track 1, one call every 5 s at 52.5) and a bird heard early on (track 2).
    for (let t = 0; t < 1500; t += 5) server.event(call(t, 1, 52.5));
    server.event(call(100, 2, -120));
    for (let t = 1490; t <= 1500; t += 0.5) server.frame(hop(t, [{ track: 1, az: 53 }]));
    const c = await joinLate(server);
    expect(c.messages.map((m) => m.type).slice(0, 2)).toEqual(['hello', 'catch_up']);
    const cu = c.messages[1] as unknown as { now_s: number; window_s: number; events: EventRecord[]; tracks: { track: number; calls: number; live: boolean; azimuth_deg: number; bearing_deg: number }[] };
    expect(cu.now_s).toBe(1500);
    expect(cu.window_s).toBe(WINDOW_S);
    // Events ending in [900, 1500]: starts 900-0.3 .. 1495 -> 120 calls, oldest first.
    expect(cu.events.length).toBe(120);
    expect(cu.events.every((e) => e.end_s >= 1500 - WINDOW_S)).toBe(true);
    expect(cu.events[0]!.start_s).toBeLessThan(cu.events[cu.events.length - 1]!.start_s);
    // The bird was last heard at 100.3 s, 23 minutes ago: not among the tracks.
    expect(cu.tracks.map((t) => t.track)).toEqual([1]);
    // Its last direction is the last hop's (53), bearing = azimuth + heading 30 (interface.md).
    expect(cu.tracks[0]).toMatchObject({ track: 1, calls: 300, live: true, azimuth_deg: 53, bearing_deg: 83 });

    server.event(call(1501, 1, 52));
    await c.waitFor((m) => m.some((x) => x.type === 'event'), 'a live event');
    expect(c.messages[2]).toMatchObject({ type: 'event', start_s: 1501 });
  });

  it('gets at most the last 200 events when more came in 10 minutes; a viewer before anything happened gets no catch-up', async () => {
    const server = await startFeedServer({ port: 0, geometry: fakeGeometry(null) });
    servers.push(server);
    const first = probe(server.feedUrl);
    probes.push(first);
    await first.waitFor((m) => m.some((x) => x.type === 'hello'), 'hello');
    for (let i = 0; i < 450; i++) server.event(call(i, 1 + (i % 3), -40 + (i % 3) * 30));
    const c = await joinLate(server);
    const cu = c.messages[1] as unknown as { events: EventRecord[]; tracks: { track: number; calls: number; live: boolean; bearing_deg?: number }[] };
    expect(cu.events.length).toBe(MAX_EVENTS);
    expect(cu.events[0]!.start_s).toBe(250);
    expect(cu.events[MAX_EVENTS - 1]!.start_s).toBe(449);
    expect(cu.tracks.map((t) => [t.track, t.calls, t.live])).toEqual([
      [1, 150, false],
      [2, 150, false],
      [3, 150, false],
    ]);
    expect(cu.tracks[0]!.bearing_deg).toBeUndefined(); // no heading, no bearing
    await new Promise((r) => setTimeout(r, 100));
    expect(first.ofType('catch_up')).toEqual([]);
  });
});

import { afterEach, describe, expect, it } from 'vitest';
import { RuntimeFailure } from '../../src/util/errors.js';
import { SOCKET_HIGH_WATER_BYTES, startFeedServer, type FeedServer, type FeedServerSetup } from '../../src/feed/feed-server.js';
import type { EventRecord } from '../../src/records/record-types.js';
import { DEFAULT_SCENE, fakeEvents, fakeFrame, fakeGeometry, pairDelays } from '../helpers/feed-fake.js';
import { probe, refusedStatus, until, type Probe } from '../helpers/ws-probe.js';

const servers: FeedServer[] = [];
const probes: Probe[] = [];
afterEach(async () => {
  for (const p of probes.splice(0)) p.ws.terminate();
  for (const s of servers.splice(0)) await s.close();
});

async function serve(extra: Partial<FeedServerSetup> = {}): Promise<{ server: FeedServer; logs: string[] }> {
  const logs: string[] = [];
  const server = await startFeedServer({ port: 0, geometry: fakeGeometry(), onLog: (l) => logs.push(l), ...extra });
  servers.push(server);
  return { server, logs };
}

function open(url: string, opts?: Parameters<typeof probe>[1]): Probe {
  const p = probe(url, opts);
  probes.push(p);
  return p;
}

const helloArrived = (p: Probe): Promise<void> => p.waitFor((m) => m.some((x) => x.type === 'hello'), 'hello');

const sampleEvent: EventRecord = {
  start_s: 3.1,
  end_s: 3.62,
  azimuth_deg: 48.7,
  spread_deg: 2.1,
  confidence: 0.88,
  track: 2,
};

describe('feed messages', () => {
  it('sends hello with the geometry JSON of interface.md, then frames, events and gaps with their record fields', async () => {
    const { server } = await serve({ settings: { sample_rate_hz: 48000, hop_s: 0.02, station: 'east pond' } });
    const c = open(server.feedUrl);
    await helloArrived(c);
    const hello = c.messages[0];
    // interface.md, "Geometry file (JSON)": name, heading_deg, mics [{channel, position_m}].
    expect(hello).toEqual({
      type: 'hello',
      protocol: 1,
      geometry: {
        name: 'reed-bed-square-10cm',
        heading_deg: 30,
        mics: [
          { channel: 0, position_m: [-0.05, 0.05, 0] },
          { channel: 1, position_m: [0.05, 0.05, 0] },
          { channel: 2, position_m: [0.05, -0.05, 0] },
          { channel: 3, position_m: [-0.05, -0.05, 0] },
        ],
      },
      settings: { sample_rate_hz: 48000, hop_s: 0.02, station: 'east pond' },
    });

    const frame = fakeFrame(DEFAULT_SCENE, 7);
    server.frame(frame);
    server.event(sampleEvent);
    server.gap({ gap: 'device overrun', start_s: 4, end_s: 4.25 });
    await c.waitFor((m) => m.length >= 4, 'frame, event, gap');
    expect(c.messages.slice(1).map((m) => m.type)).toEqual(['frame', 'event', 'gap']);
    expect(c.messages[1]).toEqual({ type: 'frame', ...frame });
    // interface.md, "Frame records": time_s, azimuth_deg, elevation_deg, confidence, tdoa_s, level_dbfs.
    for (const key of ['time_s', 'azimuth_deg', 'elevation_deg', 'confidence', 'tdoa_s', 'level_dbfs']) {
      expect(c.messages[1]).toHaveProperty(key);
    }
    expect(c.messages[2]).toEqual({ type: 'event', ...sampleEvent });
    // the gap record of every sink (records/gap-record.ts), with its type
    expect(c.messages[3]).toEqual({ type: 'gap', gap: 'device overrun', start_s: 4, end_s: 4.25 });
    expect(server.stats()).toMatchObject({ clients: 1, framesIn: 1, eventsIn: 1, gapsIn: 1, framesDropped: 0 });
  });

  it('the fake frames carry pair delays by the formula of interface.md, tdoa = (p_a - p_b) . u / c', () => {
    // Mic 0 (-0.05, 0.05), mic 1 (0.05, 0.05); a source at +90 (right, +x): tdoa(0,1) = -0.1 / 343 s.
    const d = pairDelays(fakeGeometry(), 90);
    expect(d).toHaveLength(6);
    expect(d[0]).toBeCloseTo(-0.1 / 343, 12);
    // A source straight ahead reaches mics 0 and 1 together (common practice, no source).
    expect(pairDelays(fakeGeometry(), 0)[0]).toBeCloseTo(0, 12);
    const events = Array.from({ length: 200 }, (_, i) => fakeEvents(DEFAULT_SCENE, i)).flat();
    expect(events.length).toBeGreaterThan(2);
  });

  it('a subscribe with frames: false stops frames but not events (documented client message)', async () => {
    const { server } = await serve();
    const c = open(server.feedUrl);
    await helloArrived(c);
    c.ws.send(JSON.stringify({ type: 'subscribe', frames: false }));
    c.ws.send(JSON.stringify({ type: 'ping', id: 'after-subscribe' }));
    await c.waitFor((m) => m.some((x) => x.type === 'pong' && x.id === 'after-subscribe'), 'pong');
    for (let i = 0; i < 20; i++) server.frame(fakeFrame(DEFAULT_SCENE, i));
    server.event(sampleEvent);
    await c.waitFor((m) => m.some((x) => x.type === 'event'), 'event');
    expect(c.ofType('frame')).toHaveLength(0);
    expect(server.stats().perClient[0].frames).toBe(false);
  });
});

describe('slow viewers', () => {
  it('a viewer that never reads stays at its queue bound, its drops are counted, and another viewer gets everything', async () => {
    const bound = 16;
    const { server } = await serve({ queueBound: bound, pingIntervalS: 60 });
    const stuck = open(server.feedUrl);
    const reader = open(server.feedUrl);
    await Promise.all([helloArrived(stuck), helloArrived(reader)]);
    stuck.ws.pause();

    let pushed = 0;
    let maxWaiting = 0;
    let maxBuffered = 0;
    let maxChars = 0;
    let longest = 0;
    const stuckStats = () => server.stats().perClient.find((c) => c.id === 1);
    // Push until the stuck viewer's socket is full and its queue has dropped a good number of frames.
    for (let batch = 0; batch < 600 && (stuckStats()?.dropped ?? 0) < 300; batch++) {
      for (let k = 0; k < 100; k++) {
        const f = fakeFrame(DEFAULT_SCENE, pushed++);
        longest = Math.max(longest, JSON.stringify(f).length + 20);
        server.frame(f);
      }
      if (batch === 3) server.event(sampleEvent);
      await reader.waitFor((m) => m.length >= 1 + pushed + (batch >= 3 ? 1 : 0), 'the reading viewer to catch up');
      const s = stuckStats();
      if (s === undefined) throw new Error('the stuck viewer was cut off');
      maxWaiting = Math.max(maxWaiting, s.framesWaiting);
      maxBuffered = Math.max(maxBuffered, s.bufferedAmount);
      maxChars = Math.max(maxChars, s.queuedChars);
    }
    const s = stuckStats();
    expect(s?.dropped).toBeGreaterThanOrEqual(300);
    expect(maxWaiting).toBe(bound);
    expect(maxChars).toBeLessThanOrEqual((bound + 1) * longest + 200);
    expect(maxBuffered).toBeLessThan(SOCKET_HIGH_WATER_BYTES + longest);
    expect(server.stats().framesDropped).toBe(s?.dropped);

    // The reader got every frame, in order, and the event.
    const frames = reader.ofType('frame');
    expect(frames).toHaveLength(pushed);
    expect(frames.every((f, i) => f.time_s === fakeFrame(DEFAULT_SCENE, i).time_s)).toBe(true);
    expect(reader.ofType('event')).toHaveLength(1);

    // Once it reads again, the stuck viewer gets what was kept, the event, and a status telling its drops.
    const dropped = s?.dropped ?? -1;
    stuck.ws.resume();
    await stuck.waitFor((m) => m.filter((x) => x.type === 'frame').length === pushed - dropped, 'the kept frames', 15000);
    await stuck.waitFor((m) => m.some((x) => x.type === 'status' && x.dropped_frames === dropped), 'a status with the drop count', 5000);
    expect(stuck.ofType('event')).toHaveLength(1);
  });

  it('cuts off a viewer that does not answer pings, keeps one that does', async () => {
    const { server, logs } = await serve({ pingIntervalS: 0.2 });
    const silent = open(server.feedUrl, { autoPong: false });
    const polite = open(server.feedUrl);
    await Promise.all([helloArrived(silent), helloArrived(polite)]);
    const closed = await silent.closed;
    // RFC 6455 section 7.1.5: 1006 = closed without a close frame (the server terminated it).
    expect(closed.code).toBe(1006);
    expect(logs.some((l) => l.includes('no answer to the last ping'))).toBe(true);
    await new Promise((r) => setTimeout(r, 600));
    expect(polite.ws.readyState).toBe(polite.ws.OPEN);
    expect(server.stats().clients).toBe(1);
  });

  it('refuses viewers beyond the cap with close code 1013 and a reason', async () => {
    const { server } = await serve({ maxClients: 2 });
    const a = open(server.feedUrl);
    const b = open(server.feedUrl);
    await Promise.all([helloArrived(a), helloArrived(b)]);
    const extra = open(server.feedUrl);
    const closed = await extra.closed;
    // RFC 6455 / IANA WebSocket close code registry: 1013 = Try Again Later.
    expect(closed.code).toBe(1013);
    expect(closed.reason).toMatch(/full: 2 viewers/);
    expect(extra.ofType('hello')).toHaveLength(0);
    expect(server.stats()).toMatchObject({ clients: 2, refused: 1 });
  });
});

describe('bad client messages', () => {
  it('non-JSON, unknown types, binary and huge messages do not hurt other viewers', async () => {
    const { server, logs } = await serve();
    const rude = open(server.feedUrl);
    const calm = open(server.feedUrl);
    await Promise.all([helloArrived(rude), helloArrived(calm)]);
    rude.ws.send('this is not json {');
    rude.ws.send(JSON.stringify({ type: 'launch', target: 'moon' }));
    rude.ws.send(JSON.stringify([1, 2, 3]));
    rude.ws.send(JSON.stringify({ type: 'subscribe', frames: 'maybe' }));
    rude.ws.send(Buffer.from([0, 1, 2, 3]));
    rude.ws.send(JSON.stringify({ type: 'ping', id: 7 }));
    await rude.waitFor((m) => m.some((x) => x.type === 'pong' && x.id === 7), 'pong after the bad messages');
    expect(logs.filter((l) => l.includes('ignored')).length).toBe(5);
    expect(logs.some((l) => l.includes('not JSON'))).toBe(true);
    expect(logs.some((l) => l.includes('unknown type "launch"'))).toBe(true);

    server.frame(fakeFrame(DEFAULT_SCENE, 0));
    await rude.waitFor((m) => m.some((x) => x.type === 'frame'), 'a frame to the rude viewer, still served');

    rude.ws.send('x'.repeat(100_000));
    const closed = await rude.closed;
    // RFC 6455 section 7.4.1: 1009 = message too big to process.
    expect(closed.code).toBe(1009);

    for (let i = 1; i <= 5; i++) server.frame(fakeFrame(DEFAULT_SCENE, i));
    await calm.waitFor((m) => m.filter((x) => x.type === 'frame').length === 6, 'all frames to the calm viewer');
    expect(calm.ws.readyState).toBe(calm.ws.OPEN);
    await until(() => server.stats().clients === 1, 'the rude viewer to be gone');
  });
});

describe('access', () => {
  it('enforces the token on the feed and the page when one is set', async () => {
    const token = 'heron-at-dusk-42';
    const { server, logs } = await serve({ token });
    const base = server.feedUrl.split('?')[0];
    expect(server.feedUrl).toBe(`${base}?token=${token}`);
    // RFC 9110 section 15.5.2: 401 Unauthorized.
    expect(await refusedStatus(base)).toBe(401);
    expect(await refusedStatus(`${base}?token=heron-at-dusk-43`)).toBe(401);
    expect(await refusedStatus(`${base}?token=${token}x`)).toBe(401);
    const ok = open(server.feedUrl);
    await helloArrived(ok);
    expect(logs.filter((l) => l.includes('wrong token'))).toHaveLength(3);

    const page = server.url.split('?')[0];
    expect((await fetch(page)).status).toBe(401);
    expect((await fetch(`${page}?token=wrong-token-123`)).status).toBe(401);
    const good = await fetch(server.url);
    expect(good.status).toBe(200);
    expect(await good.text()).toContain('azimuth-readout');
  });

  it('without a token anyone on loopback may watch, and a non-loopback host warns', async () => {
    const { server } = await serve();
    expect(server.url).toMatch(/^http:\/\/127\.0\.0\.1:\d+\/$/);
    const c = open(server.feedUrl);
    await helloArrived(c);

    const warnings: string[] = [];
    // Binding to all interfaces; the test itself still talks only to 127.0.0.1.
    const wide = await serve({ host: '0.0.0.0', onWarning: (w) => warnings.push(w) });
    expect(warnings).toHaveLength(1);
    expect(warnings[0]).toMatch(/other machines can watch.*--feed-token/);
    const w = open(wide.server.feedUrl);
    await helloArrived(w);
  });

  it('a port in use is a runtime failure that names --feed-port', async () => {
    const { server } = await serve();
    await expect(startFeedServer({ port: server.port, geometry: fakeGeometry() })).rejects.toThrow(RuntimeFailure);
    await expect(startFeedServer({ port: server.port, geometry: fakeGeometry() })).rejects.toThrow(/already in use.*--feed-port/);
  });
});

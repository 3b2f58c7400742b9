/**
 * `bearline locate --mqtt` end to end against a real broker: Eclipse Mosquitto
 * (/usr/sbin/mosquitto, an independent implementation of MQTT 3.1.1 / 5: QoS 1, retained
 * messages, last will) on 127.0.0.1. Four stations of the simulator's fleet scene (as
 * test/accuracy/fleet.test.ts: a caller 50 m from each, free field) are rendered and scanned
 * by bearline; a test client publishes their events the way a station's MQTT sink does
 * (src/sinks/mqtt-sink.ts: seq, retained status, last will) at real-time pace, and one station
 * drops off (its last will says offline) and comes back with its backlog.
 * Checked: the live fixes equal the file mode's on the same events (same rounding), lie within
 * 1 m of the scene's caller, the offline station is said once and its backlog comes back as
 * backfill, the fixes on ROOT/fixes equal stdout, the fix view serves its page and feed, and
 * SIGINT stops cleanly (exit 0). Bad input exits 2, a broker lost for good exits 1.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import mqtt, { type MqttClient } from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import WebSocket from 'ws';
import { stationTopics } from '../../src/sinks/mqtt-sink.js';
import { locateTopicNames, stationTopicNames } from '../../src/station/station-topics.js';
import { formatUtc } from '../../src/locate/time.js';
import type { EventRecord } from '../../src/records/record-types.js';
import { DEG, render, scanEvents } from '../accuracy/helpers.js';
import { BIN, expectUsageFailure, runCli } from '../helpers/cli.js';
import { Broker, freePort } from '../helpers/mosquitto.js';
import { tempDir } from '../helpers/temp-dir.js';

const RANGE = 50;
const STATIONS = [
  { id: 'reeds-north', bearingFromCaller: 10, heading: 200 },
  { id: 'boardwalk', bearingFromCaller: 100, heading: 290 },
  { id: 'willow', bearingFromCaller: 190, heading: 45 },
  { id: 'hide', bearingFromCaller: 280, heading: 120 },
].map((s) => ({ ...s, east: RANGE * Math.sin(s.bearingFromCaller * DEG), north: RANGE * Math.cos(s.bearingFromCaller * DEG) }));
const OFF = 'willow';
const LATE = 'hide';
/** Publishing delay after a call's end (a station's event cutter and network), seconds. */
const DELAY_S = 0.3;

interface Feature {
  type: 'Feature';
  id: string;
  geometry: { type: 'Point'; coordinates: number[] } | null;
  properties: { utc: string; east_m: number; north_m: number; ellipse_major_m: number; ellipse_minor_m: number; stations: string[]; revision: number; backfill: boolean; flags: string[] };
}

const work = tempDir('fleet').dir;
let broker: Broker;
const lists: Record<string, EventRecord[]> = {};
const stationFile = join(work, 'marsh.json');

function waitFor(what: string, ok: () => boolean, ms = 15_000): Promise<void> {
  const until = Date.now() + ms;
  return new Promise((resolve, reject) => {
    const poll = (): void => {
      if (ok()) return resolve();
      if (Date.now() > until) return reject(new Error(`timed out waiting for ${what}`));
      setTimeout(poll, 20);
    };
    poll();
  });
}

function sleepUntil(ms: number): Promise<void> {
  return new Promise((r) => setTimeout(r, Math.max(0, ms - Date.now())));
}

/** A station's MQTT client as the station's sink makes it: retained online status, offline as the last will. */
async function stationClient(url: string, id: string): Promise<MqttClient> {
  const t = stationTopicNames('bearline', id);
  const client = mqtt.connect(url, {
    clientId: `bearline-${id}`,
    reconnectPeriod: 0,
    will: { topic: t.status, payload: Buffer.from(JSON.stringify({ station: id, state: 'offline', utc: new Date().toISOString() })), qos: 1, retain: true },
  });
  await new Promise<void>((resolve) => client.once('connect', () => resolve()));
  await client.publishAsync(t.status, JSON.stringify({ station: id, state: 'online', utc: new Date().toISOString() }), { qos: 1, retain: true });
  return client;
}

function features(text: string): Feature[] {
  return text
    .split('\n')
    .filter((l) => l.trim() !== '')
    .map((l) => JSON.parse(l) as Feature);
}

/** The newest revision of each fix, with a position. */
function finals(fs: readonly Feature[]): Feature[] {
  const m = new Map<string, Feature>();
  for (const f of fs) m.set(f.id, f);
  return [...m.values()].filter((f) => f.geometry !== null);
}

beforeAll(async () => {
  broker = new Broker(join(work, 'broker'), await freePort());
  await broker.start();
  for (const s of STATIONS) {
    const wav = render(work, s.id, {
      sample_rate_hz: 48000,
      duration_s: 4,
      seed: 21,
      speed_of_sound_m_s: 343,
      array: { geometry: 'square-20cm', position_m: [s.east, s.north, 1.5], heading_deg: s.heading },
      sources: [
        {
          name: 'caller',
          position_m: [0, 0, 1.5],
          signal: { type: 'noise', low_hz: 400, high_hz: 8000 },
          level: { db_spl_at_1m: 100 },
          calls: { start_s: 0.3, length_s: 0.15, every_s: 0.8, jitter_s: 0.1 },
        },
      ],
      full_scale_db_spl: 110,
      noise: { floor_dbfs: -75 },
    });
    lists[s.id] = scanEvents(wav, '--speed-of-sound', '343');
  }
  writeFileSync(
    stationFile,
    JSON.stringify({
      origin: { lat_deg: 52.0, lon_deg: 5.0, alt_m: 0 },
      // NTP-disciplined clocks (50 ms): the matching window (about 0.44 s) stays shorter than the 0.8 s between calls.
      stations: STATIONS.map((s) => ({ id: s.id, east_m: s.east, north_m: s.north, up_m: 1.5, heading_deg: s.heading, clock_uncertainty_s: 0.05 })),
    }),
  );
});

afterAll(async () => {
  await broker?.stop();
});

describe('topic names', () => {
  it("the locate's station topics under the root 'bearline' are the station sink's (src/sinks/mqtt-sink.ts)", () => {
    expect(stationTopicNames('bearline', 'reeds-north')).toEqual(stationTopics('reeds-north'));
    expect(locateTopicNames('marsh/bearline')).toEqual({ fixes: 'marsh/bearline/fixes', status: 'marsh/bearline/locate' });
  });
});

describe('locate --mqtt with four simulated stations, one dropping off and coming back', () => {
  let liveOut = '';
  let liveErr = '';
  let exitCode: number | null = null;
  const onBroker: Feature[] = [];
  const viewMessages: { type: string; [k: string]: unknown }[] = [];
  let page = '';
  let lastStatus = '';
  let fileFeatures: Feature[] = [];

  beforeAll(async () => {
    const child: ChildProcess = spawn(process.execPath, [BIN, 'locate', '--stations', stationFile, '--mqtt', broker.url, '--speed-of-sound', '343', '--event-latency', '1.5', '--revise', '--status-interval', '1', '--serve', '--feed-port', '0'], {
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    child.stdout!.setEncoding('utf8').on('data', (d: string) => (liveOut += d));
    child.stderr!.setEncoding('utf8').on('data', (d: string) => (liveErr += d));
    const exited = new Promise<void>((resolve) => child.once('exit', (code) => ((exitCode = code), resolve())));
    await waitFor('the fix view', () => /fix view at (http:\S+)/.test(liveErr));
    const viewUrl = /fix view at (http:\S+)/.exec(liveErr)![1]!;
    page = await (await fetch(viewUrl)).text();
    const ws = new WebSocket(viewUrl.replace('http:', 'ws:').replace(/\/$/, '/feed'));
    ws.on('message', (d) => viewMessages.push(JSON.parse(String(d)) as { type: string }));
    await new Promise<void>((resolve) => ws.once('open', () => resolve()));

    const watcher = mqtt.connect(broker.url, { clientId: 'test-watcher' });
    await new Promise<void>((resolve) => watcher.once('connect', () => resolve()));
    watcher.on('message', (topic, payload) => {
      if (topic === 'bearline/fixes') onBroker.push(JSON.parse(payload.toString()) as Feature);
      else lastStatus = payload.toString();
    });
    await watcher.subscribeAsync(['bearline/fixes', 'bearline/locate'], { qos: 1 });

    // The stations start; their stream starts at t0 (UTC), and each event goes out DELAY_S after its call ends.
    const clients = new Map<string, MqttClient>();
    for (const s of STATIONS) clients.set(s.id, await stationClient(broker.url, s.id));
    const t0 = Date.now() + 500;
    const offAt = t0 + 1500;
    const backAt = t0 + 3900;
    const plan = STATIONS.flatMap((s) =>
      lists[s.id]!.map((rec, i) => ({ station: s.id, seq: i + 1, rec: { ...rec, utc: formatUtc(t0 / 1000 + rec.start_s) }, at: t0 + (rec.end_s + DELAY_S) * 1000 })),
    );
    // One event of 'hide' (online all along) is held up 3.5 s: late, past its call's wait (about 1.9 s after the onset).
    plan.find((p) => p.station === LATE)!.at += 3500;
    plan.sort((a, b) => a.at - b.at);
    for (const s of STATIONS) lists[s.id] = lists[s.id]!.map((r) => ({ ...r, utc: formatUtc(t0 / 1000 + r.start_s) }));
    const send = (p: (typeof plan)[number]): Promise<unknown> =>
      clients.get(p.station)!.publishAsync(stationTopicNames('bearline', p.station).events, JSON.stringify({ seq: p.seq, station: p.station, ...p.rec }), { qos: 1 });
    const held: typeof plan = [];
    let dropped = false;
    let back = false;
    for (const p of plan) {
      if (!dropped && p.at >= offAt) {
        await sleepUntil(offAt);
        // The station vanishes without a goodbye: the broker publishes its last will (offline).
        clients.get(OFF)!.stream.destroy();
        dropped = true;
      }
      if (dropped && !back && p.at >= backAt) {
        await sleepUntil(backAt);
        clients.set(OFF, await stationClient(broker.url, OFF));
        for (const h of held) await send(h);
        back = true;
      }
      await sleepUntil(p.at);
      if (dropped && !back && p.station === OFF) held.push(p);
      else await send(p);
    }
    if (!back) {
      await sleepUntil(backAt);
      clients.set(OFF, await stationClient(broker.url, OFF));
      for (const h of held) await send(h);
    }
    // Let the last calls wait out their time, then stop with SIGINT.
    await new Promise((r) => setTimeout(r, 3500));
    child.kill('SIGINT');
    await exited;
    for (const c of clients.values()) await c.endAsync();
    await waitFor('the fixes on the broker', () => onBroker.length >= features(liveOut).length, 3000).catch(() => undefined);
    await new Promise((r) => setTimeout(r, 200));
    await watcher.endAsync();
    ws.close();

    // The file mode on the same events (with their utc).
    const logs = STATIONS.map((s) => {
      const f = join(work, `${s.id}.events.jsonl`);
      writeFileSync(f, lists[s.id]!.map((r) => JSON.stringify(r)).join('\n') + '\n');
      return `${s.id}=${f}`;
    });
    const file = runCli(['locate', '--stations', stationFile, '--speed-of-sound', '343', ...logs]);
    expect(file.status).toBe(0);
    fileFeatures = (JSON.parse(file.stdout) as { features: Feature[] }).features;
  }, 60_000);

  it('stops cleanly on SIGINT (exit 0) with a final status line', () => {
    console.log(liveErr);
    expect(exitCode).toBe(0);
    expect(liveErr).toMatch(/status: \d+ fixes, \d+ revised, \d+ backfill events, \d+ late/);
    expect(JSON.parse(lastStatus)).toMatchObject({ state: 'offline', reason: 'stopped' });
  });

  it('the final fixes equal the file mode on the same events (same rounding) and lie within 1 m of the caller', () => {
    const live = finals(features(liveOut));
    console.log(`live: ${features(liveOut).length} publications, ${live.length} fixes; file mode: ${fileFeatures.length} fixes`);
    expect(fileFeatures.length).toBeGreaterThanOrEqual(3);
    expect(live.length).toBe(fileFeatures.length);
    for (const f of fileFeatures) {
      const l = live.find((x) => x.properties.utc === f.properties.utc);
      expect(l, `a live fix at ${f.properties.utc}`).toBeDefined();
      expect([...l!.properties.stations].sort()).toEqual([...f.properties.stations].sort());
      expect(l!.geometry).toEqual(f.geometry);
      for (const k of ['east_m', 'north_m', 'ellipse_major_m', 'ellipse_minor_m'] as const) expect(l!.properties[k]).toBe(f.properties[k]);
      // The scene's caller is at (0, 0) on the plane.
      expect(Math.hypot(l!.properties.east_m, l!.properties.north_m)).toBeLessThan(1);
    }
  });

  it('the offline station is said once, left out while away, and its backlog comes back as backfill', () => {
    expect(liveErr.match(/station 'willow' is offline/g)?.length).toBe(1);
    expect(liveErr.match(/station 'willow' is back online/g)?.length).toBe(1);
    const all = features(liveOut);
    const firstPublications = all.filter((f) => f.properties.revision === 0);
    expect(firstPublications.some((f) => !f.properties.stations.includes(OFF))).toBe(true);
    const backfill = all.filter((f) => f.properties.backfill);
    console.log(`backfill publications: ${backfill.map((f) => `${f.id} rev ${f.properties.revision} [${f.properties.stations.join(',')}]`).join('; ')}`);
    expect(backfill.length).toBeGreaterThanOrEqual(1);
    for (const b of backfill) expect(b.properties.stations).toContain(OFF);
    expect(backfill.some((b) => b.properties.revision > 0 && all.some((f) => f.id === b.id && f.properties.revision === 0))).toBe(true);
  });

  it("a late event is counted and, with --revise, revises its call's fix under the same id", () => {
    const finalStatus = [...liveErr.matchAll(/status: .*?(\d+) late/g)].pop();
    expect(Number(finalStatus![1])).toBe(1);
    const all = features(liveOut);
    const revised = all.filter((f) => f.properties.revision > 0 && !f.properties.backfill);
    expect(revised.length).toBe(1);
    expect(revised[0]!.properties.stations).toContain(LATE);
    const first = all.find((f) => f.id === revised[0]!.id && f.properties.revision === 0)!;
    expect(first.properties.stations).not.toContain(LATE);
  });

  it('every fix on stdout is on bearline/fixes too (GeoJSON Features with ids)', () => {
    const out = features(liveOut);
    expect(onBroker.map((f) => `${f.id}/${f.properties.revision}`).sort()).toEqual(out.map((f) => `${f.id}/${f.properties.revision}`).sort());
    for (const f of out) expect(f.type).toBe('Feature');
  });

  it('the fix view serves its own page and sends stations, station states, rays and fixes', () => {
    expect(page).toContain('fixes.js');
    const hello = viewMessages.find((m) => m.type === 'hello') as unknown as { stations: { id: string; heading_deg: number }[] };
    expect(hello.stations.map((s) => s.id)).toEqual(STATIONS.map((s) => s.id));
    expect(hello.stations.map((s) => s.heading_deg)).toEqual(STATIONS.map((s) => s.heading));
    expect(viewMessages.some((m) => m.type === 'station' && m.id === OFF && m.online === false)).toBe(true);
    expect(viewMessages.filter((m) => m.type === 'call').length).toBeGreaterThan(10);
    expect(viewMessages.filter((m) => m.type === 'fix').length).toBeGreaterThanOrEqual(3);
  });
});

describe('locate --mqtt: bad input exits 2, a broker lost for good exits 1', () => {
  it('a URL that is not mqtt:// is refused', () => {
    expectUsageFailure(runCli(['locate', '--stations', stationFile, '--mqtt', 'http://127.0.0.1:1883']), /--mqtt.*mqtt:\/\//);
  });

  it('an unreachable broker is refused with what to check', async () => {
    const port = await freePort();
    expectUsageFailure(runCli(['locate', '--stations', stationFile, '--mqtt', `mqtt://127.0.0.1:${port}`]), /cannot reach the MQTT broker .*check the address/);
  });

  it('stations in local metres without an origin, log files with --mqtt, and --serve without --mqtt are refused', () => {
    const local = join(work, 'local.json');
    writeFileSync(local, JSON.stringify({ stations: STATIONS.map((s) => ({ id: s.id, east_m: s.east, north_m: s.north })) }));
    expectUsageFailure(runCli(['locate', '--stations', local, '--mqtt', broker.url]), /origin/);
    expectUsageFailure(runCli(['locate', '--stations', stationFile, '--mqtt', broker.url, 'a.jsonl']), /drop the log files/);
    expectUsageFailure(runCli(['locate', '--stations', stationFile, '--serve', 'a.jsonl']), /--serve: only with --mqtt/);
    expectUsageFailure(runCli(['locate', '--stations', stationFile, '--mqtt', broker.url, '--topic-root', 'a/#']), /--topic-root/);
  });

  it('a broker that stays away longer than --broker-give-up stops the run with exit 1', async () => {
    const child = spawn(process.execPath, [BIN, 'locate', '--stations', stationFile, '--mqtt', broker.url, '--broker-give-up', '1'], { stdio: ['ignore', 'pipe', 'pipe'] });
    let err = '';
    child.stderr!.setEncoding('utf8').on('data', (d: string) => (err += d));
    const exited = new Promise<number | null>((resolve) => child.once('exit', (code) => resolve(code)));
    await waitFor('locate to start', () => /locating live/.test(err));
    await broker.stop();
    const code = await exited;
    console.log(err);
    expect(code).toBe(1);
    expect(err).toMatch(/lost the MQTT broker/);
    expect(err).toMatch(/unreachable for 1 s \(--broker-give-up\): stopping/);
    expect(err).not.toMatch(/^\s+at .+:\d+:\d+\)?$/m);
  });
});

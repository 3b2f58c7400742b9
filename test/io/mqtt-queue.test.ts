import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { homedir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { tempDir } from '../helpers/temp-dir.js';
import { runCli } from '../helpers/cli.js';
import { Broker, freePort } from '../helpers/mosquitto.js';
import { DiskQueue } from '../../src/sinks/disk-queue.js';
import { mqttQueueFolder } from '../../src/sinks/mqtt-options.js';
import { MqttSink } from '../../src/sinks/mqtt-sink.js';
import { stateDir } from '../../src/util/state-dir.js';
import type { EventRecord } from '../../src/records/record-types.js';

// Per-station MQTT queues (issue 17 item 3), checked against a real broker: Eclipse Mosquitto
// (/usr/sbin/mosquitto) on 127.0.0.1, which acknowledges QoS 1 messages per the MQTT standard
// (OASIS MQTT 3.1.1, PUBACK). What a subscriber receives is what the stations delivered.

const work = tempDir('mqtt-queue').dir;
const ev = (n: number): EventRecord => ({ start_s: n, end_s: n + 0.3, azimuth_deg: 10 + n, spread_deg: 2, confidence: 0.8, track: 1 });

async function waitFor(what: string, ok: () => boolean, ms = 15_000): Promise<void> {
  const until = Date.now() + ms;
  while (!ok()) {
    if (Date.now() > until) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 20));
  }
}

describe('the state folder (util/state-dir.ts): never the working folder', () => {
  it('$STATE_DIRECTORY (systemd StateDirectory=) first, then $XDG_STATE_HOME/bearline, then ~/.local/state/bearline (XDG Base Directory defaults)', () => {
    expect(stateDir({ STATE_DIRECTORY: '/var/lib/bearline', XDG_STATE_HOME: '/x' })).toBe('/var/lib/bearline');
    expect(stateDir({ STATE_DIRECTORY: '/var/lib/bearline:/var/lib/other' })).toBe('/var/lib/bearline');
    expect(stateDir({ XDG_STATE_HOME: '/home/frog/.state' })).toBe('/home/frog/.state/bearline');
    expect(stateDir({ XDG_STATE_HOME: 'relative' })).toBe(join(homedir(), '.local/state/bearline')); // the XDG spec ignores relative paths
    expect(stateDir({})).toBe(join(homedir(), '.local/state/bearline'));
    expect(mqttQueueFolder({ mqttQueueDir: null }, 'marsh-east', { STATE_DIRECTORY: '/var/lib/bearline' })).toBe('/var/lib/bearline/mqtt-queue/marsh-east');
    expect(mqttQueueFolder({ mqttQueueDir: '/data/q' }, 'marsh-east', {})).toBe('/data/q/marsh-east');
  });

  it('listen with --mqtt and no --mqtt-queue-dir queues under $XDG_STATE_HOME, keyed by station, nothing in the working folder', () => {
    const cwd = join(work, 'cwd');
    const state = join(work, 'xdg-state');
    mkdirSync(cwd, { recursive: true });
    // one second of silence on stdin, a broker port where nothing listens: the event queue is made, nothing sent
    const r = runCli(['listen', '--stdin', '--rate', '48000', '--channels', '2', '--spacing', '0.2', '--quiet', '--station', 'dyke-3', '--mqtt', 'mqtt://127.0.0.1:9', '--close-timeout', '3'], {
      input: Buffer.alloc(48_000 * 4),
      cwd,
      env: { XDG_STATE_HOME: state, STATE_DIRECTORY: '' },
      timeoutMs: 30_000,
    });
    expect(r.status, r.stderr).toBe(0);
    expect(existsSync(join(state, 'bearline', 'mqtt-queue', 'dyke-3'))).toBe(true);
    expect(readdirSync(cwd)).toEqual([]);
  });
});

describe('MQTT queues of several stations against Mosquitto on 127.0.0.1', () => {
  let broker: Broker;
  let port: number;
  beforeAll(async () => {
    port = await freePort();
    broker = new Broker(join(work, 'broker'), port);
  });
  afterAll(async () => broker?.stop());

  it('two stations in one queue folder: a backlog goes out only under its own station, seq unique and unbroken per station', async () => {
    const root = join(work, 'shared');
    const url = `mqtt://127.0.0.1:${port}`;
    // Station reed-a queues 3 events while the broker is down, and stops with them on disk.
    const a = new MqttSink('reed-a', { mqtt: url, mqttQueueDir: root }, { retryMs: 200, drainMs: 100, onWarning: () => undefined });
    for (let n = 0; n < 3; n++) a.event(ev(n));
    await a.close();
    await broker.start();
    const got: { topic: string; body: Record<string, unknown> }[] = [];
    const sub = mqtt.connect(url, { clientId: 'queue-test-sub', reconnectPeriod: 200 });
    sub.on('message', (topic, payload) => got.push({ topic, body: JSON.parse(payload.toString()) as Record<string, unknown> }));
    await new Promise<void>((resolve) => sub.once('connect', () => resolve()));
    await sub.subscribeAsync('bearline/+/events', { qos: 1 });
    // Station reed-b starts in the same folder: before the fix it sent reed-a's backlog as its own.
    const b = new MqttSink('reed-b', { mqtt: url, mqttQueueDir: root }, { retryMs: 200 });
    b.event(ev(10));
    b.event(ev(11));
    await waitFor('reed-b delivered', () => b.stats().delivered === 2);
    // reed-a comes back: its backlog goes out under its own topic, then its new event.
    const a2 = new MqttSink('reed-a', { mqtt: url, mqttQueueDir: root }, { retryMs: 200 });
    a2.event(ev(3));
    await waitFor('reed-a delivered', () => a2.stats().delivered === 4);
    await waitFor('the subscriber has all 6', () => got.length >= 6);
    await b.close();
    await a2.close();
    await sub.endAsync();

    const of = (station: string): Record<string, unknown>[] => got.filter((g) => g.topic === `bearline/${station}/events`).map((g) => g.body);
    expect(got).toHaveLength(6);
    expect(of('reed-a').map((m) => [m.station, m.seq, m.start_s])).toEqual([
      ['reed-a', 1, 0],
      ['reed-a', 2, 1],
      ['reed-a', 3, 2],
      ['reed-a', 4, 3],
    ]);
    expect(of('reed-b').map((m) => [m.station, m.seq, m.start_s])).toEqual([
      ['reed-b', 1, 10],
      ['reed-b', 2, 11],
    ]);
    expect(readdirSync(root).sort()).toEqual(['reed-a', 'reed-b']);
  });

  it('a damaged segment (a garbage line, a line without seq): both moved aside with a warning, the rest delivered, seq continues after the highest good one', async () => {
    const root = join(work, 'damaged');
    const dir = join(root, 'pond-7');
    mkdirSync(dir, { recursive: true });
    const good = (seq: number): string => JSON.stringify({ seq, station: 'pond-7', ...ev(seq) });
    const seg = join(dir, 'seg-000000000001.jsonl');
    writeFileSync(seg, [good(1), good(2), '\u0000\u0000garbage{', JSON.stringify({ station: 'pond-7', ...ev(9) }), good(3), good(5), ''].join('\n'));
    const got: Record<string, unknown>[] = [];
    const sub = mqtt.connect(broker.url, { clientId: 'queue-test-damaged', reconnectPeriod: 200 });
    sub.on('message', (_t, payload) => got.push(JSON.parse(payload.toString()) as Record<string, unknown>));
    await new Promise<void>((resolve) => sub.once('connect', () => resolve()));
    await sub.subscribeAsync('bearline/pond-7/events', { qos: 1 });
    const warnings: string[] = [];
    const sink = new MqttSink('pond-7', { mqtt: broker.url, mqttQueueDir: root }, { retryMs: 200, onWarning: (m) => warnings.push(m) });
    sink.event(ev(6));
    await waitFor('5 delivered', () => sink.stats().delivered === 5);
    await waitFor('5 received', () => got.length === 5);
    await sink.close();
    await sub.endAsync();
    expect(got.map((m) => m.seq)).toEqual([1, 2, 3, 5, 6]);
    expect(got.every((m) => m.station === 'pond-7')).toBe(true);
    expect(warnings.join('\n')).toMatch(/seg-000000000001\.jsonl: 2 damaged line\(s\) \(not JSON, or no seq\) moved to .*damaged-seg-000000000001\.jsonl; the rest will be sent/);
    expect(readFileSync(join(dir, 'damaged-seg-000000000001.jsonl'), 'utf8').split('\n').filter((l) => l !== '')).toHaveLength(2);
  });
});

describe('one process per station queue (lock file with the pid)', () => {
  it('a second queue on the same folder is refused while the first holds it; after close it opens', () => {
    const dir = join(work, 'locked');
    const q = new DiskQueue(dir, { maxBytes: 1 << 20, onWarning: () => undefined });
    expect(readFileSync(join(dir, 'lock'), 'utf8').trim()).toBe(String(process.pid));
    expect(() => new DiskQueue(dir, { maxBytes: 1 << 20, onWarning: () => undefined })).toThrow(new RegExp(`MQTT queue ${dir} is in use by process ${process.pid}`));
    q.close();
    expect(existsSync(join(dir, 'lock'))).toBe(false);
    new DiskQueue(dir, { maxBytes: 1 << 20, onWarning: () => undefined }).close();
  });

  it('a lock left by a process that is gone is taken over, with a warning; seq continues', () => {
    const dir = join(work, 'stale');
    const first = new DiskQueue(dir, { maxBytes: 1 << 20, onWarning: () => undefined });
    first.push((seq) => JSON.stringify({ seq }));
    first.push((seq) => JSON.stringify({ seq }));
    first.close();
    const dead = spawnSync(process.execPath, ['-e', 'process.stdout.write(String(process.pid))'], { encoding: 'utf8' });
    const deadPid = Number(dead.stdout);
    writeFileSync(join(dir, 'lock'), `${deadPid}\n`);
    const warnings: string[] = [];
    const q = new DiskQueue(dir, { maxBytes: 1 << 20, onWarning: (m) => warnings.push(m) });
    expect(warnings).toEqual([`the MQTT queue ${dir} was locked by process ${deadPid}, which is gone; taking it over`]);
    expect(q.push((seq) => JSON.stringify({ seq })).seq).toBe(3);
    q.close();
  });

  it('listen for a station whose queue another live process holds: exit 2, a clear message, no stack trace', async () => {
    const root = join(work, 'cli-lock');
    const driver = fileURLToPath(new URL('../helpers/mqtt-driver.ts', import.meta.url));
    const port = await freePort(); // nothing listens: the driver only holds its queue
    const holder = spawn(process.execPath, ['--import', 'tsx', driver, `mqtt://127.0.0.1:${port}`, 'heron-1', root, '1'], { stdio: 'ignore' });
    try {
      await waitFor('the holder to lock its queue', () => existsSync(join(root, 'heron-1', 'lock')));
      const r = runCli(['listen', '--stdin', '--rate', '48000', '--channels', '2', '--spacing', '0.2', '--quiet', '--station', 'heron-1', '--mqtt', `mqtt://127.0.0.1:${port}`, '--mqtt-queue-dir', root], {
        input: Buffer.alloc(4800 * 4),
        timeoutMs: 30_000,
      });
      expect(r.status, r.stderr).toBe(2);
      expect(r.stderr).toMatch(new RegExp(`the MQTT queue ${root}/heron-1 is in use by process ${holder.pid} \\(another bearline for the same station\\?\\); stop that one`));
      expect(r.stderr).not.toMatch(/^\s+at /m);
    } finally {
      holder.kill('SIGKILL');
    }
  });
});

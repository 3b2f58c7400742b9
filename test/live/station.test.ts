import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Broker, freePort } from '../helpers/mosquitto.js';
import { liveFixture, standInRecorder } from './helpers.js';

// A headless station run of listen: a stand-in recorder streams sox-made calls from +20 deg
// (0.2 m pair); the sinks are the record log and a real Mosquitto broker.
const AZ = 20;
const fx = liveFixture('bearline-station-', 'marsh-calls', AZ, 6);
const bin = join(fx.dir, 'bin');
beforeAll(() => standInRecorder(bin, 'sox', fx.rec.raw, 6, ['exec sleep 60']));
const env = (): NodeJS.ProcessEnv => ({ PATH: `${bin}:${process.env.PATH}` });

function jsonLines(path: string): Record<string, unknown>[] {
  const text = readFileSync(path, 'utf8');
  expect(text.endsWith('\n')).toBe(true); // whole lines only
  return text.trimEnd().split('\n').map((l) => JSON.parse(l) as Record<string, unknown>);
}

describe('listen --log-dir', () => {
  it('files appear with whole lines; SIGHUP starts new files; SIGTERM flushes the open event and exits 0', async () => {
    const logs = join(fx.dir, 'logs');
    const run = fx.start(['listen', '--spacing', '0.2', '--quiet', '--station', 'marsh-east', '--log-dir', logs, '--log-frames', '--health', '0', '--close-timeout', '5'], { env: env() });
    await run.waitFor((_, err) => /status as JSON at http:\/\/127\.0\.0\.1:\d+\/health/.test(err), 'the health URL');
    const healthUrl = /status as JSON at (http:\/\/\S+)/.exec(run.stderr())![1]!;
    const names = (): string[] => readdirSync(logs).sort();
    const until = async (cond: () => boolean, what: string): Promise<void> => {
      const end = Date.now() + 15_000;
      while (!cond()) {
        if (Date.now() > end) throw new Error(`timed out waiting for ${what}; stderr: ${run.stderr()}`);
        await new Promise((r) => setTimeout(r, 100));
      }
    };
    await until(() => names().some((n) => n.includes('.events.')), 'an events file');
    expect(names().every((n) => /^marsh-east\.(frames|events)\.\d{8}T\d{6}Z(_\d{3})?\.jsonl$/.test(n))).toBe(true);
    const health = (await (await fetch(healthUrl)).json()) as Record<string, unknown>;
    expect(health.station).toBe('marsh-east');
    expect(health.hops as number).toBeGreaterThan(0);
    expect(health.disk_used_bytes as number).toBeGreaterThan(0);

    run.child.kill('SIGHUP');
    await run.waitFor((_, err) => /SIGHUP: log files reopened/.test(err), 'the reopen');
    await until(() => names().filter((n) => n.includes('.frames.')).length >= 2, 'a second frames file');
    // Stop in the middle of a call: the newest logged frame is loud (calls are about 30 dB above the self-noise).
    const lastFrame = (): Record<string, unknown> | null => {
      const f = names().filter((n) => n.includes('.frames.')).pop();
      const lines = f ? readFileSync(join(logs, f), 'utf8').split('\n').filter((l) => l.endsWith('}')) : [];
      return lines.length ? (JSON.parse(lines[lines.length - 1]!) as Record<string, unknown>) : null;
    };
    let inCall: Record<string, unknown> | null = null;
    await until(() => {
      const f = lastFrame();
      if (f && (f.level_dbfs as number) > -35 && (f.time_s as number) > 2) inCall = f;
      return inCall !== null;
    }, 'a frame inside a call');
    const stopAt = inCall!.time_s as number;
    run.child.kill('SIGTERM');
    expect(await run.exited).toBe(0);
    expect(run.stderr()).toMatch(/SIGTERM: closing .*log files in .*\n(.*\n)*bearline: all records written \(\d+ events?, .* to .*log files in .*\); stopped/);

    const frames = names().filter((n) => n.includes('.frames.')).flatMap((n) => jsonLines(join(logs, n)));
    const events = names().filter((n) => n.includes('.events.')).flatMap((n) => jsonLines(join(logs, n)));
    // Frames continue across the reopen with no hop missing and none twice.
    const hopS = 512 / 48000;
    for (let i = 1; i < frames.length; i++) expect((frames[i]!.time_s as number) - (frames[i - 1]!.time_s as number)).toBeCloseTo(hopS, 3);
    // The call that was going on at SIGTERM was cut short and written as an event on the way out.
    expect(events.some((e) => (e.start_s as number) <= stopAt && (e.end_s as number) >= stopAt - 0.05)).toBe(true);
    for (const e of events) expect(Math.abs((e.azimuth_deg as number) - AZ)).toBeLessThan(3);
  });
});

describe('listen --mqtt against a real Mosquitto broker', () => {
  let broker: Broker;
  beforeAll(async () => {
    broker = new Broker(join(fx.dir, 'broker'), await freePort());
    await broker.start();
  });
  afterAll(async () => broker.stop());

  it("events arrive on bearline/STATION/events with seq and the right azimuth; the retained status says 'offline' after SIGTERM", async () => {
    const sub = mqtt.connect(broker.url, { clientId: 'live-test-sub', reconnectPeriod: 200 });
    const got: { topic: string; body: Record<string, unknown> }[] = [];
    sub.on('message', (topic, payload) => got.push({ topic, body: JSON.parse(payload.toString()) as Record<string, unknown> }));
    await new Promise<void>((resolve) => sub.once('connect', () => resolve()));
    await sub.subscribeAsync(['bearline/reed-bed/events', 'bearline/reed-bed/status'], { qos: 1 });
    const run = fx.start(['listen', '--spacing', '0.2', '--quiet', '--station', 'reed-bed', '--mqtt', broker.url, '--mqtt-queue-dir', join(fx.dir, 'mq')], { env: env() });
    const end = Date.now() + 20_000;
    while (got.filter((g) => g.topic.endsWith('/events')).length < 3 && Date.now() < end) await new Promise((r) => setTimeout(r, 100));
    run.child.kill('SIGTERM');
    expect(await run.exited).toBe(0);
    await new Promise((r) => setTimeout(r, 300));
    sub.end();
    const events = got.filter((g) => g.topic === 'bearline/reed-bed/events').map((g) => g.body);
    expect(events.length).toBeGreaterThanOrEqual(3);
    events.forEach((e, i) => {
      expect(e.station).toBe('reed-bed');
      expect(e.seq).toBe((events[0]!.seq as number) + i);
      expect(Math.abs((e.azimuth_deg as number) - AZ)).toBeLessThan(3);
      expect(Date.parse(e.utc as string)).not.toBeNaN();
    });
    const status = got.filter((g) => g.topic === 'bearline/reed-bed/status').map((g) => g.body.state);
    expect(status[0]).toBe('online');
    expect(status[status.length - 1]).toBe('offline');
  });
});

describe('configs/systemd/bearline-station.service still fits listen', () => {
  it("the install note's BEARLINE_ARGS start a station (paths moved to a temp folder, a stand-in arecord)", async () => {
    const unit = readFileSync(new URL('../../configs/systemd/bearline-station.service', import.meta.url), 'utf8');
    expect(unit).toMatch(/^ExecStart=\/usr\/bin\/env bearline listen \$BEARLINE_ARGS$/m);
    const line = /BEARLINE_ARGS=([^']+)'/.exec(unit)![1]!;
    const profiles = new URL('../../configs/profiles/', import.meta.url).pathname;
    const args = line.replace(/\/var\/lib\/bearline/g, join(fx.dir, 'state')).replace(/\/etc\/bearline\//g, profiles).split(/\s+/);
    expect(args).toContain('--array');
    const arecordBin = join(fx.dir, 'bin-arecord');
    // The stand-in streams two-channel calls, so the 20 cm pair preset stands in for the note's square array.
    standInRecorder(arecordBin, 'arecord', fx.rec.raw, 6, ['exec sleep 60']);
    const run = fx.start(['listen', ...args.map((a) => (a === 'square-10cm' ? 'pair-20cm' : a))], { env: { PATH: `${arecordBin}:${process.env.PATH}` } });
    const logs = join(fx.dir, 'state', 'logs');
    const end = Date.now() + 15_000;
    while (!(existsSync(logs) && readdirSync(logs).some((n) => n.startsWith('marsh-east.events.'))) && Date.now() < end) await new Promise((r) => setTimeout(r, 100));
    run.child.kill('SIGTERM');
    expect(await run.exited, run.stderr()).toBe(0);
    expect(readdirSync(logs).some((n) => n.startsWith('marsh-east.events.'))).toBe(true);
    expect(run.lines).toHaveLength(0); // --quiet
  });
});

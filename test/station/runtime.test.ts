import { EventEmitter } from 'node:events';
import { Command } from 'commander';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { tempDir } from '../helpers/temp-dir.js';
import { addOptions, givenOptions } from '../../src/cli/options.js';
import { feedOptionSpecs } from '../../src/feed/feed-options.js';
import { analysisOptionSpecs } from '../../src/analysis/analysis-options.js';
import { trackerOptionSpecs } from '../../src/track/options.js';
import { RuntimeFailure } from '../../src/util/errors.js';
import { mqttOptionSpecs, resolveMqttOptions } from '../../src/sinks/mqtt-options.js';
import { listLogFiles, RecordLog } from '../../src/sinks/record-log.js';
import { recordLogOptionSpecs, resolveRecordLogOptions } from '../../src/sinks/record-log-options.js';
import { formatByteSize, parseByteSize } from '../../src/util/byte-size.js';
import { startHealthServer } from '../../src/station/health-server.js';
import { resolveStationOptions, stationOptionSpecs } from '../../src/station/runtime-options.js';
import { installShutdown, type StationSink } from '../../src/station/shutdown.js';
import { defaultStationId } from '../../src/station/station-id.js';
import { buildStatus, formatStatusLine, StatusMonitor } from '../../src/station/status.js';

afterEach(() => {
  vi.useRealTimers();
});

describe('status snapshot', () => {
  // process.cpuUsage() reports microseconds of user and system CPU time (Node.js API docs).
  it('CPU share is CPU time over wall time: 1.5 s of CPU in 30 s is 5 % of a core', () => {
    const s = buildStatus({
      station: 'marsh-east',
      startedMs: Date.parse('2025-06-14T20:00:00Z'),
      nowMs: Date.parse('2025-06-14T22:03:30Z'),
      cpuSinceStart: { user: 300_000_000, system: 70_800_000 },
      recent: { cpu: { user: 1_200_000, system: 300_000 }, wallMs: 30_000 },
      counters: { hops: 345_000, droppedAudioS: 0.25, events: 812 },
      disk: { usedBytes: 12.5 * 1024 ** 2, freeBytes: 5 * 1024 ** 3 },
      mqtt: { connected: false, queued: 14, dropped: 0 },
    });
    expect(s.uptime_s).toBe(2 * 3600 + 210);
    expect(s.cpu_share_recent).toBeCloseTo(0.05, 10);
    expect(s.cpu_share).toBeCloseTo(370.8 / 7410, 10);
    expect(formatStatusLine(s)).toBe(
      'status: marsh-east up 2h03m, cpu 5.0% of a core, 345000 hops, 812 events, dropped 0.25 s audio, logs 12.5 MiB, 5.0 GiB free, mqtt down, 14 queued',
    );
  });

  it('the status line and snapshot carry the analysis real-time factor when the run has one', () => {
    const s = buildStatus({
      station: 'marsh-east',
      startedMs: 0,
      nowMs: 60_000,
      cpuSinceStart: { user: 600_000, system: 0 },
      counters: { hops: 5625, droppedAudioS: 0, events: 2, analysisRealTime: 412.3 },
      disk: { usedBytes: null, freeBytes: null },
    });
    expect(s.analysis_real_time).toBe(412.3);
    expect(formatStatusLine(s)).toBe('status: marsh-east up 1m00s, cpu 1.0% of a core, 5625 hops, 2 events, dropped 0.00 s audio, analysis 412x real time');
  });

  it('the monitor prints a line every N minutes (fake timers) and serves the same snapshot over HTTP', async () => {
    vi.useFakeTimers({ toFake: ['setInterval', 'clearInterval', 'Date'] });
    let cpu = 0;
    let hops = 0;
    const mon = new StatusMonitor({
      station: 'pond-test',
      counters: () => ({ hops, droppedAudioS: 0, events: 3 }),
      disk: () => ({ usedBytes: 1024, freeBytes: null }),
      cpuUsage: () => ({ user: cpu, system: 0 }),
    });
    const lines: string[] = [];
    mon.startLines(2, (l) => lines.push(l));
    cpu = 6_000_000; // 6 s of CPU in two minutes: 5 %
    hops = 5625;
    vi.advanceTimersByTime(2 * 60_000);
    expect(lines).toEqual(['status: pond-test up 2m00s, cpu 5.0% of a core, 5625 hops, 3 events, dropped 0.00 s audio, logs 1.0 KiB']);
    vi.advanceTimersByTime(2 * 60_000);
    expect(lines.length).toBe(2);
    expect(lines[1]).toMatch(/cpu 0\.0% of a core/);
    mon.close();
    vi.advanceTimersByTime(10 * 60_000);
    expect(lines.length).toBe(2);
    vi.useRealTimers();

    const health = await startHealthServer({ port: 0, host: '127.0.0.1', allowHosts: null }, () => mon.snapshot());
    try {
      const res = await fetch(`http://127.0.0.1:${health.port}/health`);
      expect(res.status).toBe(200);
      expect(res.headers.get('content-type')).toBe('application/json');
      const body = (await res.json()) as Record<string, unknown>;
      expect(body).toMatchObject({ station: 'pond-test', hops: 5625, events: 3, disk_used_bytes: 1024, disk_free_bytes: null });
      expect((await fetch(`http://127.0.0.1:${health.port}/frogs`)).status).toBe(404);
      expect((await fetch(`http://127.0.0.1:${health.port}/health`, { method: 'POST' })).status).toBe(405);
      await expect(startHealthServer({ port: health.port, host: '127.0.0.1', allowHosts: null }, () => mon.snapshot())).rejects.toThrow(
        new RuntimeFailure(`cannot serve --health on 127.0.0.1:${health.port}: the port is in use; pick another port`),
      );
    } finally {
      await health.close();
    }
  });
});

describe('shutdown helper', () => {
  it('SIGTERM stops the input, closes every sink in order, then exits 0; SIGHUP reopens', async () => {
    const signals = new EventEmitter();
    const steps: string[] = [];
    const sink = (name: string): StationSink => ({
      name,
      close: async () => {
        await new Promise((r) => setTimeout(r, 5));
        steps.push(`close ${name}`);
      },
      reopen: () => void steps.push(`reopen ${name}`),
    });
    const exits: number[] = [];
    const lines: string[] = [];
    const h = installShutdown([sink('log'), sink('mqtt')], { signals, exit: (c) => exits.push(c), log: (l) => lines.push(l), stopInput: () => void steps.push('stop input') });
    signals.emit('SIGHUP');
    await new Promise((r) => setTimeout(r, 5));
    signals.emit('SIGTERM');
    signals.emit('SIGINT');
    await h.stop('test');
    expect(steps).toEqual(['reopen log', 'reopen mqtt', 'stop input', 'close log', 'close mqtt']);
    expect(exits).toEqual([0]);
    expect(lines).toContain('SIGINT again: still closing, please wait');
    h.dispose();
    expect(signals.listenerCount('SIGTERM')).toBe(0);
  });

  it('a sink that fails or hangs makes the exit code 1 with a line saying which', async () => {
    const signals = new EventEmitter();
    const exits: number[] = [];
    const lines: string[] = [];
    const h = installShutdown(
      [
        { name: 'log files in /data', close: () => { throw new RuntimeFailure('disk full'); } },
        { name: 'MQTT broker', close: () => new Promise<void>(() => {}) },
      ],
      { signals, exit: (c) => exits.push(c), log: (l) => lines.push(l), closeTimeout: 0.1 },
    );
    expect(await h.stop('SIGTERM')).toBe(1);
    expect(exits).toEqual([1]);
    expect(lines).toContain('closing log files in /data failed: disk full');
    expect(lines).toContain('closing MQTT broker took longer than 0.1 s; giving up on it');
    h.dispose();
  });

  it('SIGHUP through the helper makes the record log start new files', async () => {
    const dir = tempDir('hup').dir;
    const signals = new EventEmitter();
    const log = new RecordLog('pond-test', { logDir: dir });
    const h = installShutdown([log], { signals, exit: () => {}, log: () => {} });
    log.event({ start_s: 1, end_s: 2, azimuth_deg: 5, spread_deg: 1, confidence: 1, track: 0 });
    signals.emit('SIGHUP');
    await new Promise((r) => setTimeout(r, 10));
    log.event({ start_s: 3, end_s: 4, azimuth_deg: 5, spread_deg: 1, confidence: 1, track: 1 });
    await h.stop('SIGTERM');
    expect(listLogFiles(dir, 'pond-test').length).toBe(2);
    h.dispose();
  });
});

describe('option specs (one home per option)', () => {
  const all = [...stationOptionSpecs, ...recordLogOptionSpecs, ...mqttOptionSpecs];

  it('no option name clashes with the analysis, tracker or feed options', () => {
    const others = [...analysisOptionSpecs, ...feedOptionSpecs, ...trackerOptionSpecs].map((s) => s.name);
    expect(others.length).toBeGreaterThan(20);
    const mine = all.map((s) => s.name);
    expect(new Set(mine).size).toBe(mine.length);
    expect(mine.filter((f) => others.includes(f))).toEqual([]);
  });

  it('commander parses the flags into options that resolve with defaults', () => {
    const cmd = new Command().exitOverride();
    addOptions(cmd, stationOptionSpecs);
    addOptions(cmd, recordLogOptionSpecs);
    addOptions(cmd, mqttOptionSpecs);
    cmd.parse(['--station', 'marsh-east', '--log-dir', '/data/bearline', '--max-disk', '2G', '--rotate-size', '500M', '--mqtt', 'mqtt://127.0.0.1:1883', '--log-frames', '--health', '8077'], { from: 'user' });
    const st = resolveStationOptions(givenOptions(cmd, stationOptionSpecs));
    const lg = resolveRecordLogOptions(givenOptions(cmd, recordLogOptionSpecs));
    const mq = resolveMqttOptions(givenOptions(cmd, mqttOptionSpecs));
    expect(st).toMatchObject({ station: 'marsh-east', health: 8077, healthHost: '127.0.0.1', statusEvery: 10 });
    expect(lg).toMatchObject({ logDir: '/data/bearline', maxDisk: 2 * 1024 ** 3, rotateSize: 500 * 1024 ** 2, logFrames: true, logFormat: 'jsonl' });
    expect(mq).toMatchObject({ mqtt: 'mqtt://127.0.0.1:1883', mqttFrames: false, mqttQueueMax: 16 * 1024 ** 2 });
    expect(cmd.helpInformation()).toMatch(/--max-disk <size>\s+delete this station's oldest log files/);
  });

  it('a bad value is a one-line usage error naming the flag', () => {
    const cmd = new Command().exitOverride().configureOutput({ writeErr: () => {} });
    addOptions(cmd, recordLogOptionSpecs);
    expect(() => cmd.parse(['--max-disk', '5X'], { from: 'user' })).toThrow(/--max-disk.*'5X' is not a size; give a size like 500M, 2G or 65536/);
    const c2 = new Command().exitOverride().configureOutput({ writeErr: () => {} });
    addOptions(c2, stationOptionSpecs);
    expect(() => c2.parse(['--station', 'pond/east'], { from: 'user' })).toThrow(/--station.*'pond\/east' is not allowed/);
    expect(() => c2.parse(['--health', '70000'], { from: 'user' })).toThrow(/--health.*70000 is out of range; give a whole number from 0 to 65535/);
  });

  // 1024-based units, as in `df -h` and `ls -h` (common practice, no source).
  it('sizes: 500M, 2G, 64k, 1.5GiB, bytes', () => {
    expect(parseByteSize('500M')).toBe(524_288_000);
    expect(parseByteSize('2G')).toBe(2_147_483_648);
    expect(parseByteSize('64k')).toBe(65_536);
    expect(parseByteSize('1.5GiB')).toBe(1_610_612_736);
    expect(parseByteSize('4096')).toBe(4096);
    expect(() => parseByteSize('two gigs')).toThrow(/not a size/);
    expect(formatByteSize(1536)).toBe('1.5 KiB');
  });

  it('the default station id is the host name cut to safe characters', () => {
    expect(defaultStationId('Frog-Pond.local')).toBe('Frog-Pond');
    expect(defaultStationId('raspberry pi')).toBe('raspberry-pi');
    expect(defaultStationId('...')).toBe('station');
  });
});

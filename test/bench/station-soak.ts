/**
 * Station soak: one hour's worth of records (frames at 48 kHz with a 1024-sample hop, plus one
 * event per second, as a frog chorus might give) written through the record log at full speed.
 * Reports how much faster than real time that is, and the resident memory at start and end
 * (growth would mean a leak over a night). Run alone with `npx tsx test/bench/station-soak.ts`,
 * or call runStationSoak() from the bench runner.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { setFlagsFromString } from 'node:v8';
import { runInNewContext } from 'node:vm';
import { listLogFiles, RecordLog } from '../../src/sinks/record-log.js';
import type { LogFormat } from '../../src/sinks/record-log-options.js';
import type { EventRecord, FrameRecord } from '../../src/records/record-types.js';

export interface SoakOptions {
  /** Seconds of station time to simulate (default 3600). */
  seconds?: number;
  sampleRate?: number;
  hop?: number;
  format?: LogFormat;
}

export interface SoakResult {
  format: LogFormat;
  stationSeconds: number;
  frames: number;
  events: number;
  bytes: number;
  files: number;
  wallSeconds: number;
  /** Station time over wall time: how many times faster than real time. */
  realTimeFactor: number;
  recordsPerSecond: number;
  rssStartMiB: number;
  rssEndMiB: number;
  rssPeakMiB: number;
  /** Live heap after a full collection, before and after the soak. */
  heapStartMiB: number;
  heapEndMiB: number;
}

const MiB = 1024 * 1024;

/** A full garbage collection, so that heap figures count live objects only (bench use only). */
function collectGarbage(): void {
  setFlagsFromString('--expose_gc');
  (runInNewContext('gc') as () => void)();
}

export function runStationSoak(opts: SoakOptions = {}): SoakResult {
  const seconds = opts.seconds ?? 3600;
  const rate = opts.sampleRate ?? 48_000;
  const hop = opts.hop ?? 1024;
  const format = opts.format ?? 'jsonl';
  const dir = mkdtempSync(join(tmpdir(), 'bearline-soak-'));
  const warnings: string[] = [];
  try {
    const log = new RecordLog('soak-marsh', { logDir: dir, logFormat: format, logFrames: true, rotateSize: 16 * MiB, minFree: 0 }, { onWarning: (m) => warnings.push(m) });
    const frameCount = Math.floor((seconds * rate) / hop);
    const hopS = hop / rate;
    const tdoa: number[] = [0, 0, 0, 0, 0, 0];
    const frame: FrameRecord = { time_s: 0, azimuth_deg: null, elevation_deg: null, confidence: 0, tdoa_s: tdoa, level_dbfs: -60 };
    let events = 0;
    let nextEvent = 1;
    collectGarbage();
    const heapStart = process.memoryUsage().heapUsed;
    const rssStart = process.memoryUsage().rss;
    let rssPeak = rssStart;
    const t0 = process.hrtime.bigint();
    for (let i = 0; i < frameCount; i++) {
      const t = i * hopS;
      const az = ((t * 7) % 360) - 179.5;
      frame.time_s = Number(t.toFixed(4));
      frame.azimuth_deg = Number(az.toFixed(1));
      frame.confidence = 0.5 + 0.5 * Math.abs(Math.sin(t));
      for (let p = 0; p < tdoa.length; p++) tdoa[p] = Number((Math.sin(t + p) * 2.9e-4).toFixed(7));
      frame.level_dbfs = Number((-40 + 10 * Math.sin(t / 3)).toFixed(1));
      log.frame(frame);
      if (t >= nextEvent) {
        const e: EventRecord = { start_s: nextEvent - 0.4, end_s: nextEvent, azimuth_deg: frame.azimuth_deg, spread_deg: 2.5, confidence: 0.8, track: events % 5 };
        log.event(e);
        events++;
        nextEvent++;
      }
      if ((i & 8191) === 0) rssPeak = Math.max(rssPeak, process.memoryUsage().rss);
    }
    log.close();
    const wall = Number(process.hrtime.bigint() - t0) / 1e9;
    const rssEnd = process.memoryUsage().rss;
    collectGarbage();
    const heapEnd = process.memoryUsage().heapUsed;
    const files = listLogFiles(dir, 'soak-marsh');
    if (warnings.length) throw new Error(`soak gave warnings: ${warnings.join('; ')}`);
    return {
      format,
      stationSeconds: seconds,
      frames: frameCount,
      events,
      bytes: files.reduce((s, f) => s + f.size, 0),
      files: files.length,
      wallSeconds: wall,
      realTimeFactor: seconds / wall,
      recordsPerSecond: (frameCount + events) / wall,
      rssStartMiB: rssStart / MiB,
      rssEndMiB: rssEnd / MiB,
      rssPeakMiB: Math.max(rssPeak, rssEnd) / MiB,
      heapStartMiB: heapStart / MiB,
      heapEndMiB: heapEnd / MiB,
    };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

export function formatSoak(r: SoakResult): string {
  return [
    `station soak (${r.format}): ${r.stationSeconds} s of station time, ${r.frames} frames + ${r.events} events, ${(r.bytes / MiB).toFixed(1)} MiB in ${r.files} files`,
    `  wall ${r.wallSeconds.toFixed(2)} s = ${r.realTimeFactor.toFixed(0)}x faster than real time (${r.recordsPerSecond.toFixed(0)} records/s)`,
    `  RSS start ${r.rssStartMiB.toFixed(1)} MiB, end ${r.rssEndMiB.toFixed(1)} MiB, peak ${r.rssPeakMiB.toFixed(1)} MiB (end/start ${(r.rssEndMiB / r.rssStartMiB).toFixed(2)})`,
    `  live heap after GC: start ${r.heapStartMiB.toFixed(1)} MiB, end ${r.heapEndMiB.toFixed(1)} MiB (end/start ${(r.heapEndMiB / r.heapStartMiB).toFixed(2)})`,
  ].join('\n');
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  for (const format of ['jsonl', 'csv'] as const) process.stdout.write(formatSoak(runStationSoak({ format })) + '\n');
}

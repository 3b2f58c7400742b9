import { formatRealTimeFactor } from '../analysis/analysis-meter.js';
import { formatByteSize } from '../util/byte-size.js';

/** What the live command counts as it runs. */
export interface StationCounters {
  /** Analysis hops processed. */
  hops: number;
  /** Seconds of audio lost (overruns, device gaps). */
  droppedAudioS: number;
  events: number;
  /** Real-time factor of the per-hop path on this machine (src/analysis/analysis-meter.ts); null or absent before any hop. */
  analysisRealTime?: number | null;
}

export interface DiskFigures {
  /** Bytes of this station's log files; null without a record log. */
  usedBytes: number | null;
  /** Free bytes on the log disk; null when unknown. */
  freeBytes: number | null;
}

export interface MqttFigures {
  connected: boolean;
  queued: number;
  dropped: number;
}

/** process.cpuUsage() figures, microseconds. */
export interface CpuTimes {
  user: number;
  system: number;
}

export interface StatusInput {
  station: string;
  startedMs: number;
  nowMs: number;
  /** CPU time used since the run started. */
  cpuSinceStart: CpuTimes;
  /** CPU time and wall time of the previous status line, for the recent share. */
  recent?: { cpu: CpuTimes; wallMs: number };
  counters: StationCounters;
  disk: DiskFigures;
  mqtt?: MqttFigures;
}

/** The status snapshot: printed as a line, served as JSON by --health, published to MQTT. */
export interface StationStatus {
  station: string;
  utc: string;
  uptime_s: number;
  /** CPU time over wall time since start: 1 = one core fully busy. */
  cpu_share: number;
  /** The same over the last status interval. */
  cpu_share_recent: number | null;
  hops: number;
  dropped_audio_s: number;
  events: number;
  /** Seconds of audio the analysis (with tracking) gets through per second of its own work on this machine; null before any hop. */
  analysis_real_time: number | null;
  disk_used_bytes: number | null;
  disk_free_bytes: number | null;
  mqtt?: { connected: boolean; queued: number; dropped: number };
}

function share(cpu: CpuTimes, wallMs: number): number {
  return wallMs > 0 ? (cpu.user + cpu.system) / 1000 / wallMs : 0;
}

/** Pure: the snapshot from counters and clock readings. */
export function buildStatus(input: StatusInput): StationStatus {
  const wall = input.nowMs - input.startedMs;
  const s: StationStatus = {
    station: input.station,
    utc: new Date(input.nowMs).toISOString(),
    uptime_s: Math.max(0, Math.round(wall / 1000)),
    cpu_share: share(input.cpuSinceStart, wall),
    cpu_share_recent: input.recent ? share(input.recent.cpu, input.recent.wallMs) : null,
    hops: input.counters.hops,
    dropped_audio_s: input.counters.droppedAudioS,
    events: input.counters.events,
    analysis_real_time: input.counters.analysisRealTime ?? null,
    disk_used_bytes: input.disk.usedBytes,
    disk_free_bytes: input.disk.freeBytes,
  };
  if (input.mqtt) s.mqtt = { ...input.mqtt };
  return s;
}

function duration(seconds: number): string {
  const d = Math.floor(seconds / 86400);
  const h = Math.floor((seconds % 86400) / 3600);
  const m = Math.floor((seconds % 3600) / 60);
  if (d > 0) return `${d}d${String(h).padStart(2, '0')}h`;
  if (h > 0) return `${h}h${String(m).padStart(2, '0')}m`;
  return `${m}m${String(seconds % 60).padStart(2, '0')}s`;
}

/** Pure: one status line for stderr or the journal. */
export function formatStatusLine(s: StationStatus): string {
  const cpu = s.cpu_share_recent ?? s.cpu_share;
  const parts = [
    `${s.station} up ${duration(s.uptime_s)}`,
    `cpu ${(cpu * 100).toFixed(1)}% of a core`,
    `${s.hops} hops`,
    `${s.events} events`,
    `dropped ${s.dropped_audio_s.toFixed(2)} s audio`,
  ];
  const rt = formatRealTimeFactor(s.analysis_real_time);
  if (rt !== null) parts.push(`analysis ${rt}`);
  if (s.disk_used_bytes !== null) parts.push(`logs ${formatByteSize(s.disk_used_bytes)}`);
  if (s.disk_free_bytes !== null) parts.push(`${formatByteSize(s.disk_free_bytes)} free`);
  if (s.mqtt) parts.push(`mqtt ${s.mqtt.connected ? 'up' : 'down'}, ${s.mqtt.queued} queued${s.mqtt.dropped ? `, ${s.mqtt.dropped} dropped` : ''}`);
  return `status: ${parts.join(', ')}`;
}

export interface StatusSources {
  station: string;
  counters: () => StationCounters;
  disk: () => DiskFigures;
  mqtt?: () => MqttFigures;
  clock?: () => number;
  cpuUsage?: (since?: CpuTimes) => CpuTimes;
}

/**
 * Holds the start time and CPU baseline, builds snapshots on demand, and prints a status line
 * every N minutes. The I/O edge around buildStatus.
 */
export class StatusMonitor {
  private readonly clock: () => number;
  private readonly cpuUsage: (since?: CpuTimes) => CpuTimes;
  private readonly startedMs: number;
  private readonly cpuStart: CpuTimes;
  private last: { cpu: CpuTimes; ms: number } | null = null;
  private timer: NodeJS.Timeout | null = null;
  readonly name = 'status line';

  constructor(private readonly sources: StatusSources) {
    this.clock = sources.clock ?? Date.now;
    this.cpuUsage = sources.cpuUsage ?? ((since) => process.cpuUsage(since));
    this.startedMs = this.clock();
    this.cpuStart = this.cpuUsage();
  }

  /** A snapshot; `mark` makes it the baseline of the next recent CPU share (status lines do). */
  snapshot(mark = false): StationStatus {
    const now = this.clock();
    const cpuNow = this.cpuUsage();
    const sinceStart = { user: cpuNow.user - this.cpuStart.user, system: cpuNow.system - this.cpuStart.system };
    const recent = this.last
      ? { cpu: { user: cpuNow.user - this.last.cpu.user, system: cpuNow.system - this.last.cpu.system }, wallMs: now - this.last.ms }
      : undefined;
    if (mark) this.last = { cpu: cpuNow, ms: now };
    return buildStatus({
      station: this.sources.station,
      startedMs: this.startedMs,
      nowMs: now,
      cpuSinceStart: sinceStart,
      recent,
      counters: this.sources.counters(),
      disk: this.sources.disk(),
      mqtt: this.sources.mqtt?.(),
    });
  }

  /** Print a status line every `minutes` (0 = never) through `write`. */
  startLines(minutes: number, write: (line: string) => void = (l) => process.stderr.write(`bearline: ${l}\n`)): void {
    this.stopLines();
    if (minutes <= 0) return;
    this.snapshot(true);
    this.timer = setInterval(() => write(formatStatusLine(this.snapshot(true))), minutes * 60_000);
    this.timer.unref();
  }

  stopLines(): void {
    if (this.timer) clearInterval(this.timer);
    this.timer = null;
  }

  /** StationSink: stop the status lines. */
  close(): void {
    this.stopLines();
  }
}

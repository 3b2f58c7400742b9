import { join } from 'node:path';
import mqtt, { type IClientOptions, type MqttClient } from 'mqtt';
import { UsageError } from '../util/errors.js';
import { applyDefaults } from '../util/apply-defaults.js';
import { stderrWarning } from '../util/stderr-warning.js';
import type { OptionSpec } from '../options/option-spec.js';
import type { EventRecord, FrameRecord } from '../records/record-types.js';
import { parseByteSize } from '../util/byte-size.js';
import { validateStationId } from '../station/station-id.js';
import { DiskQueue, type QueueItem } from './disk-queue.js';

/**
 * MQTT sink for fleets of stations. Topics (STATION = the station id):
 *   bearline/STATION/events  one message per event, QoS 1, JSON: {"seq": N, "station": ..., ...event}
 *   bearline/STATION/frames  one message per hop, QoS 0 (only with --mqtt-frames; never queued)
 *   bearline/STATION/status  retained: {"station", "state": "online"|"offline", "utc", ...};
 *                            the broker sends the "offline" one as the last will when the
 *                            station vanishes without saying goodbye.
 * `seq` grows by one per event and survives restarts, so subscribers can spot gaps and drop
 * repeats. While the broker is unreachable, events wait in a disk-backed queue and go out in
 * order when it is back; each leaves the queue only after the broker's PUBACK.
 */

export interface MqttOptions {
  /** Broker URL (mqtt://host:port or mqtts://host:port); null = no MQTT. */
  mqtt: string | null;
  /** Also publish frame records (QoS 0). */
  mqttFrames: boolean;
  /** Directory of the disk-backed event queue; null = ./bearline-mqtt-queue. */
  mqttQueueDir: string | null;
  /** Most bytes of unsent events to keep; the oldest go first. */
  mqttQueueMax: number;
}

/** Where events wait when --mqtt-queue-dir is not given (relative to the working folder). */
export const DEFAULT_MQTT_QUEUE_DIR = 'bearline-mqtt-queue';

export const MQTT_DEFAULTS: MqttOptions = {
  mqtt: null,
  mqttFrames: false,
  mqttQueueDir: null,
  mqttQueueMax: 16 * 1024 ** 2,
};

export function parseBrokerUrl(raw: string): string {
  let url: URL;
  try {
    url = new URL(raw);
  } catch {
    throw new UsageError(`--mqtt '${raw}' is not a URL; write it like mqtt://127.0.0.1:1883`);
  }
  if (url.protocol !== 'mqtt:' && url.protocol !== 'mqtts:') throw new UsageError(`--mqtt '${raw}' must start with mqtt:// or mqtts://`);
  if (url.hostname === '') throw new UsageError(`--mqtt '${raw}' names no host`);
  if (url.username !== '' || url.password !== '') throw new UsageError('--mqtt must not hold a user name or password (they would show in the process list)');
  return raw;
}

export const mqttOptionSpecs: readonly OptionSpec<keyof MqttOptions>[] = [
  { key: 'mqtt', flag: '--mqtt <url>', help: 'publish events to this MQTT broker, e.g. mqtt://127.0.0.1:1883', defaultValue: 'off', parse: parseBrokerUrl },
  { key: 'mqttFrames', flag: '--mqtt-frames', help: 'also publish one frame record per hop (QoS 0, not queued while the broker is away)', defaultValue: false },
  { key: 'mqttQueueDir', flag: '--mqtt-queue-dir <dir>', help: 'where events wait while the broker is unreachable', defaultValue: `./${DEFAULT_MQTT_QUEUE_DIR}`, parse: (raw: string) => raw },
  { key: 'mqttQueueMax', flag: '--mqtt-queue-max <size>', help: 'most unsent events to keep (oldest dropped first), e.g. 16M', defaultValue: '16M', parse: (raw: string) => parseByteSize(raw, '--mqtt-queue-max') },
];

export function resolveMqttOptions(partial: Partial<MqttOptions>): MqttOptions {
  const o = applyDefaults(MQTT_DEFAULTS, partial);
  if (o.mqtt !== null) parseBrokerUrl(o.mqtt);
  if (o.mqttQueueDir !== null && o.mqttQueueDir.trim() === '') throw new UsageError('--mqtt-queue-dir is empty; give a directory');
  if (!Number.isSafeInteger(o.mqttQueueMax) || o.mqttQueueMax < 64 * 1024) throw new UsageError(`--mqtt-queue-max ${o.mqttQueueMax} is too small; use at least 64K`);
  return o;
}

export function stationTopics(station: string): { events: string; frames: string; status: string } {
  validateStationId(station);
  return { events: `bearline/${station}/events`, frames: `bearline/${station}/frames`, status: `bearline/${station}/status` };
}

export interface MqttSinkDeps {
  onWarning?: (message: string) => void;
  clock?: () => number;
  /** Milliseconds between reconnect attempts. */
  retryMs?: number;
  /** On close, how long to wait for events already sent to be acknowledged. */
  drainMs?: number;
}

export interface MqttSinkStats {
  connected: boolean;
  /** Events waiting for the broker's acknowledgement (on disk). */
  queued: number;
  /** Events dropped because the queue was full. */
  dropped: number;
  /** Events the broker acknowledged in this run. */
  delivered: number;
}

/** Events sent at once before waiting for acknowledgements. */
const WINDOW = 16;

export class MqttSink {
  readonly options: MqttOptions;
  readonly topics: ReturnType<typeof stationTopics>;
  readonly name: string;
  private readonly queue: DiskQueue;
  private readonly client: MqttClient;
  private readonly warn: (message: string) => void;
  private readonly clock: () => number;
  private readonly drainMs: number;
  private sending = 0;
  private delivered = 0;
  private outage = false;
  private closing = false;
  private idleWaiters: (() => void)[] = [];

  constructor(
    readonly station: string,
    options: Partial<MqttOptions>,
    deps: MqttSinkDeps = {},
  ) {
    this.topics = stationTopics(station);
    this.options = resolveMqttOptions(options);
    if (this.options.mqtt === null) throw new UsageError('no --mqtt broker URL given');
    this.name = `MQTT broker ${this.options.mqtt}`;
    this.warn = deps.onWarning ?? stderrWarning;
    this.clock = deps.clock ?? Date.now;
    this.drainMs = deps.drainMs ?? 2000;
    this.queue = new DiskQueue(this.options.mqttQueueDir ?? join(process.cwd(), DEFAULT_MQTT_QUEUE_DIR), {
      maxBytes: this.options.mqttQueueMax,
      onWarning: this.warn,
      clock: this.clock,
    });
    const opts: IClientOptions = {
      clientId: `bearline-${station}`,
      clean: true,
      reconnectPeriod: deps.retryMs ?? 2000,
      connectTimeout: 10_000,
      queueQoSZero: false,
      will: { topic: this.topics.status, payload: Buffer.from(this.statusText('offline')), qos: 1, retain: true },
    };
    this.client = mqtt.connect(this.options.mqtt, opts);
    this.client.on('connect', () => this.onConnect());
    this.client.on('close', () => this.onClose());
    this.client.on('error', (err) => this.onError(err));
  }

  private statusText(state: 'online' | 'offline', extra: Record<string, unknown> = {}): string {
    return JSON.stringify({ station: this.station, state, utc: new Date(this.clock()).toISOString(), ...extra });
  }

  private onConnect(): void {
    if (this.outage) {
      this.outage = false;
      this.warn(`MQTT broker ${this.options.mqtt} is reachable again; sending ${this.queue.length} queued event(s)`);
    }
    this.client.publish(this.topics.status, this.statusText('online'), { qos: 1, retain: true });
    this.pump();
  }

  private onClose(): void {
    // Take back what the client still holds unacknowledged, so that it is re-sent from the
    // queue in order after the reconnect instead of by the client on its own.
    for (const id of Object.keys(this.client.outgoing)) this.client.removeOutgoingMessage(Number(id));
    if (!this.outage && !this.closing) {
      this.outage = true;
      this.warn(`lost the MQTT broker ${this.options.mqtt}; keeping events on disk in ${this.queue.dir} and retrying`);
    }
  }

  private onError(err: Error): void {
    if (!this.outage && !this.closing) {
      this.outage = true;
      this.warn(`cannot reach the MQTT broker ${this.options.mqtt} (${(err as NodeJS.ErrnoException).code ?? err.message}); keeping events on disk in ${this.queue.dir} and retrying`);
    }
  }

  /** Queue an event (on disk, fsynced) and send it when the broker is there. Returns its seq. */
  publishEvent(event: EventRecord): number {
    const item = this.queue.push((seq) => JSON.stringify({ seq, station: this.station, ...event }));
    this.pump();
    return item.seq;
  }

  /** Send a frame now if connected (QoS 0); frames are never queued. */
  publishFrame(frame: FrameRecord): void {
    if (!this.options.mqttFrames || !this.client.connected) return;
    this.client.publish(this.topics.frames, JSON.stringify({ station: this.station, ...frame }), { qos: 0 });
  }

  /** Replace the retained status message (state online) with extra fields, e.g. a status snapshot. */
  publishStatus(extra: Record<string, unknown>): void {
    if (this.client.connected) this.client.publish(this.topics.status, this.statusText('online', extra), { qos: 1, retain: true });
  }

  private pump(): void {
    if (!this.client.connected) return;
    for (const item of this.queue.waiting()) {
      if (this.sending >= WINDOW) break;
      this.send(item);
    }
  }

  private send(item: QueueItem): void {
    item.state = 'sending';
    this.sending++;
    this.client.publish(this.topics.events, item.text, { qos: 1 }, (err) => {
      this.sending--;
      if (err) {
        if (item.state === 'sending') item.state = 'waiting';
      } else {
        this.queue.done(item);
        this.delivered++;
      }
      if (this.sending === 0) for (const w of this.idleWaiters.splice(0)) w();
      this.pump();
    });
  }

  stats(): MqttSinkStats {
    return { connected: this.client.connected, queued: this.queue.length, dropped: this.queue.droppedCount, delivered: this.delivered };
  }

  /**
   * Wait (at most drainMs) for queued events to be acknowledged, publish the retained
   * "offline" status, disconnect, and keep whatever is still unsent on disk for the next run.
   */
  async close(): Promise<void> {
    if (this.closing) return;
    const deadline = this.clock() + this.drainMs;
    while (this.client.connected && this.queue.length > 0 && this.clock() < deadline) {
      await new Promise<void>((resolve) => {
        this.idleWaiters.push(resolve);
        setTimeout(resolve, 50);
      });
    }
    this.closing = true;
    if (this.client.connected) {
      await new Promise<void>((resolve) => {
        const t = setTimeout(resolve, 1000);
        this.client.publish(this.topics.status, this.statusText('offline', { reason: 'stopped' }), { qos: 1, retain: true }, () => {
          clearTimeout(t);
          resolve();
        });
      });
    }
    // A polite end sends DISCONNECT, so the broker drops the last will; force it if the
    // broker does not answer within a second.
    await Promise.race([this.client.endAsync(false), new Promise((r) => setTimeout(r, 1000))]);
    if (!this.client.disconnected) await this.client.endAsync(true);
    this.queue.close();
  }
}

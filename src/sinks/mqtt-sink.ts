import mqtt, { type IClientOptions, type MqttClient } from 'mqtt';
import { UsageError } from '../util/errors.js';
import { stderrWarning } from '../util/stderr-warning.js';
import type { GapRecord } from '../records/gap-record.js';
import type { EventRecord, FrameRecord } from '../records/record-types.js';
import type { RecordSink } from './record-sink.js';
import { validateStationId } from '../station/station-id.js';
import { DiskQueue, type QueueItem } from './disk-queue.js';
import { mqttQueueFolder, resolveMqttOptions, type MqttOptions } from './mqtt-options.js';

/**
 * MQTT sink for fleets of stations. Topics (STATION = the station id):
 *   bearline/STATION/events  one message per event or capture gap, QoS 1, JSON:
 *                            {"seq": N, "station": ..., ...event} or {"seq": N, "station": ..., "gap": why, ...}
 *   bearline/STATION/frames  one message per hop, QoS 0 (only with --mqtt-frames; never queued)
 *   bearline/STATION/status  retained: {"station", "state": "online"|"offline", "utc", ...};
 *                            the broker sends the "offline" one as the last will when the
 *                            station vanishes without saying goodbye.
 * `seq` grows by one per message and survives restarts, so subscribers can spot losses and drop
 * repeats. While the broker is unreachable, events wait in a disk-backed queue and go out in
 * order when it is back; each leaves the queue only after the broker's PUBACK. Each station has
 * its own queue folder (ROOT/STATION, mqtt-options.ts), locked to one process, so stations that
 * share a folder never send each other's events or share a seq.
 */

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

export class MqttSink implements RecordSink {
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
  /** The seq of the newest event or gap queued (0 before the first in this run). */
  lastSeq = 0;
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
    this.queue = new DiskQueue(mqttQueueFolder(this.options, station), {
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

  get wantsFrames(): boolean {
    return this.options.mqttFrames;
  }

  /** Queue an event (on disk, fsynced) and send it when the broker is there. */
  event(event: EventRecord): void {
    this.enqueue(event);
  }

  /** A gap goes where the events go, in order with them (told apart by its "gap" field, as in listen's output). */
  gap(gap: GapRecord): void {
    this.enqueue(gap);
  }

  private enqueue(rec: EventRecord | GapRecord): void {
    this.lastSeq = this.queue.push((seq) => JSON.stringify({ seq, station: this.station, ...rec })).seq;
    this.pump();
  }

  /** Send a frame now if connected (QoS 0); frames are never queued. */
  frame(frame: FrameRecord): void {
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

  /** The folder of the disk queue, for messages. */
  get queueDir(): string {
    return this.queue.dir;
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

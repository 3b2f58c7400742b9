/**
 * The viewers connected to the live feed: one outbound queue each (outbound-queue.ts), so a
 * slow or stuck viewer only loses its own oldest frames and never slows the analysis or the
 * others. Accepts and refuses viewers, answers their pings and subscriptions, cuts off those
 * that stop answering or reading, and tells a viewer that lost frames how many.
 */
import type { IncomingMessage } from 'node:http';
import { WebSocket, type RawData } from 'ws';
import type { FeedOptions } from './feed-options.js';
import { parseClientMessage, type StatusMessage } from './feed-protocol.js';
import { OutboundQueue, type MessageKind } from './outbound-queue.js';

/** Bytes the socket may hold unsent before messages wait in the viewer's queue instead. */
export const SOCKET_HIGH_WATER_BYTES = 256 * 1024;
/** Events waiting for one viewer beyond which it is cut off as hopelessly behind. */
export const MAX_KEPT_WAITING = 1000;
/** Ignored messages logged per viewer before the log goes quiet about it. */
const LOGGED_NOTES_PER_CLIENT = 10;

export interface FeedClientStats {
  id: number;
  remote: string;
  /** False after the viewer subscribed with frames: false. */
  frames: boolean;
  /** True after the viewer subscribed with maps: true. */
  maps: boolean;
  framesWaiting: number;
  keptWaiting: number;
  /** Characters waiting in the queue (the memory a slow viewer costs, besides the socket). */
  queuedChars: number;
  /** Bytes the socket holds unsent. */
  bufferedAmount: number;
  dropped: number;
  sent: number;
}

interface Client {
  readonly id: number;
  readonly ws: WebSocket;
  readonly remote: string;
  readonly queue: OutboundQueue;
  frames: boolean;
  maps: boolean;
  alive: boolean;
  reportedDrops: number;
  notes: number;
  sent: number;
  onSent: (err?: Error) => void;
}

export class ViewerHub {
  private readonly clients = new Map<number, Client>();
  private nextId = 1;
  /** Frames dropped over all viewers since the start. */
  framesDropped = 0;
  /** Viewers turned away (full, or a wrong token). */
  refused = 0;

  constructor(
    private readonly options: FeedOptions,
    /** The hello message every viewer gets first. */
    private readonly hello: string,
    private readonly log: (line: string) => void,
    /** What a viewer gets right after hello (the recent events and tracks), or null for nothing. */
    private readonly catchUp: () => string | null = () => null,
  ) {}

  get count(): number {
    return this.clients.size;
  }

  /** A viewer whose WebSocket upgrade was accepted; turned away when the feed is full. */
  accept(ws: WebSocket, req: IncomingMessage): void {
    const remote = `${req.socket.remoteAddress ?? '?'}:${req.socket.remotePort ?? '?'}`;
    if (this.clients.size >= this.options.maxClients) {
      this.refused++;
      this.log(`viewer from ${remote} refused: ${this.clients.size} already connected`);
      ws.on('error', () => undefined);
      ws.close(1013, `feed full: ${this.options.maxClients} viewers connected; try later`);
      return;
    }
    const c: Client = {
      id: this.nextId++,
      ws,
      remote,
      queue: new OutboundQueue(this.options.queueBound),
      frames: true,
      maps: false,
      alive: true,
      reportedDrops: 0,
      notes: 0,
      sent: 0,
      onSent: (err) => {
        if (!err && c.queue.length > 0) this.pump(c);
      },
    };
    this.clients.set(c.id, c);
    this.log(`viewer ${c.id} connected from ${remote}`);
    ws.on('pong', () => {
      c.alive = true;
    });
    ws.on('message', (data, isBinary) => this.onClientText(c, data, isBinary));
    ws.on('error', (err) => this.log(`viewer ${c.id}: ${err.message}`));
    ws.on('close', (code) => {
      this.clients.delete(c.id);
      this.log(`viewer ${c.id} left (${code})`);
    });
    this.enqueue(c, 'keep', this.hello);
    const recent = this.catchUp();
    if (recent !== null) this.enqueue(c, 'keep', recent);
  }

  /** A message for every viewer (frames only for those that subscribe to them). */
  broadcast(kind: MessageKind, text: string): void {
    for (const c of this.clients.values()) if (kind !== 'frame' || c.frames) this.enqueue(c, kind, text);
  }

  /** Whether any viewer asked for the evidence maps. */
  get wantsMaps(): boolean {
    for (const c of this.clients.values()) if (c.maps) return true;
    return false;
  }

  /** An evidence map to the viewers that asked for them (dropped like frames for a slow viewer). */
  broadcastMaps(text: string): void {
    for (const c of this.clients.values()) if (c.maps) this.enqueue(c, 'frame', text);
  }

  /** Cut off the viewers that did not answer the last ping; ping the others. */
  pingSweep(): void {
    for (const c of this.clients.values()) {
      if (!c.alive) {
        this.cutOff(c, 'no answer to the last ping');
        continue;
      }
      c.alive = false;
      c.ws.ping();
    }
  }

  /** Tell each viewer that lost frames since the last sweep how many it has lost. */
  statusSweep(): void {
    for (const c of this.clients.values()) {
      if (c.queue.dropped === c.reportedDrops) continue;
      c.reportedDrops = c.queue.dropped;
      const status: StatusMessage = { type: 'status', dropped_frames: c.queue.dropped, clients: this.clients.size };
      this.enqueue(c, 'status', JSON.stringify(status));
    }
  }

  stats(): FeedClientStats[] {
    return [...this.clients.values()].map((c) => ({
      id: c.id,
      remote: c.remote,
      frames: c.frames,
      maps: c.maps,
      framesWaiting: c.queue.framesWaiting,
      keptWaiting: c.queue.keptWaiting,
      queuedChars: c.queue.chars,
      bufferedAmount: c.ws.bufferedAmount,
      dropped: c.queue.dropped,
      sent: c.sent,
    }));
  }

  /** Say goodbye to every viewer (close code 1001), terminating those that do not close within 300 ms. */
  async closeAll(): Promise<void> {
    const leaving = [...this.clients.values()].map(
      (c) =>
        new Promise<void>((resolve) => {
          const timer = setTimeout(() => {
            c.ws.terminate();
            resolve();
          }, 300);
          c.ws.once('close', () => {
            clearTimeout(timer);
            resolve();
          });
          c.ws.close(1001, 'bearline feed stopped');
        }),
    );
    await Promise.all(leaving);
    this.clients.clear();
  }

  private pump(c: Client): void {
    while (c.queue.length > 0 && c.ws.readyState === WebSocket.OPEN && c.ws.bufferedAmount < SOCKET_HIGH_WATER_BYTES) {
      const text = c.queue.shift() as string;
      c.sent++;
      c.ws.send(text, c.onSent);
    }
  }

  private enqueue(c: Client, kind: MessageKind, text: string): void {
    this.framesDropped += c.queue.push(kind, text);
    if (c.queue.keptWaiting > MAX_KEPT_WAITING) return this.cutOff(c, `${c.queue.keptWaiting} events waiting, it has stopped reading`);
    this.pump(c);
  }

  private cutOff(c: Client, why: string): void {
    this.log(`viewer ${c.id} cut off: ${why}`);
    this.clients.delete(c.id);
    c.ws.terminate();
  }

  private note(c: Client, line: string): void {
    c.notes++;
    if (c.notes <= LOGGED_NOTES_PER_CLIENT) this.log(`viewer ${c.id}: ${line}`);
    if (c.notes === LOGGED_NOTES_PER_CLIENT) this.log(`viewer ${c.id}: further ignored messages are not logged`);
  }

  private onClientText(c: Client, data: RawData, isBinary: boolean): void {
    if (isBinary) return this.note(c, 'binary message ignored');
    const msg = parseClientMessage(data.toString());
    if ('problem' in msg) return this.note(c, `message ignored (${msg.problem})`);
    if (msg.type === 'ping') this.enqueue(c, 'keep', JSON.stringify({ type: 'pong', id: msg.id }));
    else {
      c.frames = msg.frames;
      if (msg.maps !== undefined) c.maps = msg.maps;
    }
  }
}

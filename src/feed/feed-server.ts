/**
 * The live feed: an HTTP server for the browser viewer (web-viewer/ at `/`) and a WebSocket
 * feed at `/feed` (messages of feed-protocol.ts). An I/O edge: the analysis calls
 * sendFrame / sendEvent / sendGap and returns at once; a slow or stuck viewer only loses
 * its own oldest frames (see outbound-queue.ts), never slows the analysis or other viewers.
 */
import { createHash, timingSafeEqual } from 'node:crypto';
import { createServer, type IncomingMessage, type ServerResponse } from 'node:http';
import type { AddressInfo, Socket } from 'node:net';
import type { Duplex } from 'node:stream';
import { WebSocket, WebSocketServer, type RawData } from 'ws';
import { RuntimeFailure, UsageError } from '../util/errors.js';
import type { ArrayGeometry } from '../geometry/array-geometry.js';
import type { EventRecord, FrameRecord } from '../records/record-types.js';
import { feedFlagName, isLoopbackHost, resolveFeedOptions, type FeedOptions } from './feed-options.js';
import {
  eventMessage,
  frameMessage,
  gapMessage,
  helloFromGeometry,
  parseClientMessage,
  type CaptureGap,
  type FeedSettings,
  type StatusMessage,
} from './feed-protocol.js';
import { OutboundQueue, type MessageKind } from './outbound-queue.js';
import { contentTypeOf, DEFAULT_WEB_ROOT, listStaticFiles, lookUpStaticPath, readStaticFile } from './static-files.js';

/** Path of the WebSocket feed. */
export const FEED_PATH = '/feed';
/** Largest message a viewer may send (bytes); a bigger one closes that viewer (1009). */
export const MAX_CLIENT_MESSAGE_BYTES = 4096;
/** Bytes the socket may hold unsent before messages wait in the viewer's queue instead. */
export const SOCKET_HIGH_WATER_BYTES = 256 * 1024;
/** Events waiting for one viewer beyond which it is cut off as hopelessly behind. */
export const MAX_KEPT_WAITING = 1000;
/** How often a viewer that lost frames is told so (ms). */
const STATUS_INTERVAL_MS = 1000;
/** Ignored messages logged per viewer before the log goes quiet about it. */
const LOGGED_NOTES_PER_CLIENT = 10;

export interface FeedServerSetup extends Partial<FeedOptions> {
  /** The array, for the hello message (the viewer draws its mics). */
  readonly geometry: ArrayGeometry;
  /** Analysis settings for the hello message (sample_rate_hz, hop_s, station, ...). */
  readonly settings?: FeedSettings;
  /** Directory served at `/` (default: the package's web-viewer/). */
  readonly webRoot?: string;
  /** Told when the feed is reachable from other machines (default: a line on stderr). */
  readonly onWarning?: (message: string) => void;
  /** Told about viewers: connects, refusals, ignored messages, cut-offs (default: nothing). */
  readonly onLog?: (line: string) => void;
}

export interface FeedClientStats {
  id: number;
  remote: string;
  /** False after the viewer subscribed with frames: false. */
  frames: boolean;
  framesWaiting: number;
  keptWaiting: number;
  /** Characters waiting in the queue (the memory a slow viewer costs, besides the socket). */
  queuedChars: number;
  /** Bytes the socket holds unsent. */
  bufferedAmount: number;
  dropped: number;
  sent: number;
}

export interface FeedStats {
  clients: number;
  framesIn: number;
  eventsIn: number;
  gapsIn: number;
  /** Frames dropped over all viewers since the start. */
  framesDropped: number;
  refused: number;
  perClient: FeedClientStats[];
}

export interface FeedServer {
  /** The page's URL (with ?token= when a token is set). */
  readonly url: string;
  /** The feed's WebSocket URL (with ?token= when a token is set). */
  readonly feedUrl: string;
  readonly port: number;
  sendFrame(rec: FrameRecord): void;
  sendEvent(rec: EventRecord): void;
  sendGap(info: CaptureGap): void;
  close(): Promise<void>;
  stats(): FeedStats;
}

interface Client {
  readonly id: number;
  readonly ws: WebSocket;
  readonly remote: string;
  readonly queue: OutboundQueue;
  frames: boolean;
  alive: boolean;
  reportedDrops: number;
  notes: number;
  sent: number;
  onSent: (err?: Error) => void;
}

function digest(text: string): Buffer {
  return createHash('sha256').update(text, 'utf8').digest();
}

/** Constant-time token check (hashing first makes the lengths equal). */
function tokenMatches(given: string | null, expected: Buffer): boolean {
  return timingSafeEqual(digest(given ?? ''), expected) && given !== null;
}

function urlHost(host: string): string {
  if (host === '0.0.0.0') return '127.0.0.1';
  if (host === '::') return '[::1]';
  return host.includes(':') ? `[${host}]` : host;
}

function refuseUpgrade(socket: Duplex, status: number, reason: string): void {
  socket.end(`HTTP/1.1 ${status} ${reason}\r\nConnection: close\r\nContent-Type: text/plain\r\n\r\n${reason}\n`);
}

async function listen(server: ReturnType<typeof createServer>, opts: FeedOptions): Promise<number> {
  return new Promise((resolve, reject) => {
    const onError = (err: NodeJS.ErrnoException): void => {
      const where = `${opts.host}:${opts.port}`;
      if (err.code === 'EADDRINUSE') {
        reject(new RuntimeFailure(`${where} is already in use: stop the other program or pick another port with ${feedFlagName('port')} (0 = any free port)`));
      } else if (err.code === 'EADDRNOTAVAIL' || err.code === 'ENOTFOUND' || err.code === 'EAI_AGAIN') {
        reject(new UsageError(`${feedFlagName('host')} ${opts.host} is not an address of this machine: use 127.0.0.1 or one of this machine's addresses`));
      } else if (err.code === 'EACCES') {
        reject(new RuntimeFailure(`not allowed to listen on ${where}: pick a port above 1023 with ${feedFlagName('port')}`));
      } else {
        reject(new RuntimeFailure(`cannot listen on ${where}: ${err.message}`));
      }
    };
    server.once('error', onError);
    server.listen(opts.port, opts.host, () => {
      server.off('error', onError);
      resolve((server.address() as AddressInfo).port);
    });
  });
}

export async function startFeedServer(setup: FeedServerSetup): Promise<FeedServer> {
  const opts = resolveFeedOptions({
    port: setup.port,
    host: setup.host,
    token: setup.token,
    maxClients: setup.maxClients,
    queueBound: setup.queueBound,
    pingIntervalS: setup.pingIntervalS,
  });
  const webRoot = setup.webRoot ?? DEFAULT_WEB_ROOT;
  const warn = setup.onWarning ?? ((m: string) => process.stderr.write(`bearline: warning: ${m}\n`));
  const log = setup.onLog ?? (() => undefined);
  const files = await listStaticFiles(webRoot).catch(() => {
    throw new RuntimeFailure(`the viewer's files are missing (${webRoot}): reinstall bearline`);
  });
  const hello = JSON.stringify(helloFromGeometry(setup.geometry, setup.settings ?? {}));
  const expectedToken = opts.token === null ? null : digest(opts.token);

  const clients = new Map<number, Client>();
  let nextId = 1;
  const totals = { framesIn: 0, eventsIn: 0, gapsIn: 0, framesDropped: 0, refused: 0 };

  const allowed = (url: URL): boolean => expectedToken === null || tokenMatches(url.searchParams.get('token'), expectedToken);

  const pump = (c: Client): void => {
    while (c.queue.length > 0 && c.ws.readyState === WebSocket.OPEN && c.ws.bufferedAmount < SOCKET_HIGH_WATER_BYTES) {
      const text = c.queue.shift() as string;
      c.sent++;
      c.ws.send(text, c.onSent);
    }
  };

  const enqueue = (c: Client, kind: MessageKind, text: string): void => {
    totals.framesDropped += c.queue.push(kind, text);
    if (c.queue.keptWaiting > MAX_KEPT_WAITING) {
      log(`viewer ${c.id} cut off: ${c.queue.keptWaiting} events waiting, it has stopped reading`);
      clients.delete(c.id);
      c.ws.terminate();
      return;
    }
    pump(c);
  };

  const broadcast = (kind: MessageKind, text: string, onlyFrameSubscribers: boolean): void => {
    for (const c of clients.values()) if (!onlyFrameSubscribers || c.frames) enqueue(c, kind, text);
  };

  const note = (c: Client, line: string): void => {
    c.notes++;
    if (c.notes <= LOGGED_NOTES_PER_CLIENT) log(`viewer ${c.id}: ${line}`);
    if (c.notes === LOGGED_NOTES_PER_CLIENT) log(`viewer ${c.id}: further ignored messages are not logged`);
  };

  const onClientText = (c: Client, data: RawData, isBinary: boolean): void => {
    if (isBinary) return note(c, 'binary message ignored');
    const msg = parseClientMessage(data.toString());
    if ('problem' in msg) return note(c, `message ignored (${msg.problem})`);
    if (msg.type === 'ping') enqueue(c, 'keep', JSON.stringify({ type: 'pong', id: msg.id }));
    else c.frames = msg.frames;
  };

  const wss = new WebSocketServer({ noServer: true, maxPayload: MAX_CLIENT_MESSAGE_BYTES, perMessageDeflate: false });

  const accept = (ws: WebSocket, req: IncomingMessage): void => {
    const remote = `${req.socket.remoteAddress ?? '?'}:${req.socket.remotePort ?? '?'}`;
    if (clients.size >= opts.maxClients) {
      totals.refused++;
      log(`viewer from ${remote} refused: ${clients.size} already connected`);
      ws.on('error', () => undefined);
      ws.close(1013, `feed full: ${opts.maxClients} viewers connected; try later`);
      return;
    }
    const c: Client = {
      id: nextId++,
      ws,
      remote,
      queue: new OutboundQueue(opts.queueBound),
      frames: true,
      alive: true,
      reportedDrops: 0,
      notes: 0,
      sent: 0,
      onSent: (err) => {
        if (!err && c.queue.length > 0) pump(c);
      },
    };
    clients.set(c.id, c);
    log(`viewer ${c.id} connected from ${remote}`);
    ws.on('pong', () => {
      c.alive = true;
    });
    ws.on('message', (data, isBinary) => onClientText(c, data, isBinary));
    ws.on('error', (err) => log(`viewer ${c.id}: ${err.message}`));
    ws.on('close', (code) => {
      clients.delete(c.id);
      log(`viewer ${c.id} left (${code})`);
    });
    enqueue(c, 'keep', hello);
  };

  const serveFile = async (req: IncomingMessage, res: ServerResponse, url: URL): Promise<void> => {
    const name = lookUpStaticPath(url.pathname, files);
    if (name === null) {
      res.writeHead(url.pathname === FEED_PATH ? 426 : 404, { 'Content-Type': 'text/plain; charset=utf-8' });
      res.end(url.pathname === FEED_PATH ? 'the feed needs a WebSocket connection\n' : 'not found\n');
      return;
    }
    // The page needs the token; its script and style carry no data and are the same for everyone.
    if (name === 'index.html' && !allowed(url)) {
      res.writeHead(401, { 'Content-Type': 'text/plain; charset=utf-8' });
      res.end('this feed needs its access token: open the page with ?token=...\n');
      return;
    }
    const body = await readStaticFile(webRoot, name).catch(() => null);
    if (body === null) {
      res.writeHead(404, { 'Content-Type': 'text/plain; charset=utf-8' });
      res.end('not found\n');
      return;
    }
    res.writeHead(200, {
      'Content-Type': contentTypeOf(name),
      'Content-Length': body.length,
      'Cache-Control': 'no-cache',
      'X-Content-Type-Options': 'nosniff',
      'Referrer-Policy': 'no-referrer',
      'Content-Security-Policy':
        "default-src 'self'; connect-src 'self'; img-src 'self' data:; style-src 'self'; script-src 'self'; frame-ancestors 'none'",
    });
    res.end(req.method === 'HEAD' ? undefined : body);
  };

  const server = createServer((req, res) => {
    if (req.method !== 'GET' && req.method !== 'HEAD') {
      res.writeHead(405, { Allow: 'GET, HEAD', 'Content-Type': 'text/plain; charset=utf-8' });
      res.end('only GET and HEAD\n');
      return;
    }
    const url = new URL(req.url ?? '/', 'http://feed.invalid');
    serveFile(req, res, url).catch(() => {
      if (!res.headersSent) res.writeHead(500);
      res.end();
    });
  });

  server.on('upgrade', (req: IncomingMessage, socket: Socket, head: Buffer) => {
    socket.on('error', () => undefined);
    const url = new URL(req.url ?? '/', 'http://feed.invalid');
    if (url.pathname !== FEED_PATH) return refuseUpgrade(socket, 404, 'Not Found');
    if (!allowed(url)) {
      totals.refused++;
      log(`viewer from ${req.socket.remoteAddress ?? '?'} refused: missing or wrong token`);
      return refuseUpgrade(socket, 401, 'Unauthorized');
    }
    wss.handleUpgrade(req, socket, head, (ws) => accept(ws, req));
  });

  const port = await listen(server, opts);
  if (!isLoopbackHost(opts.host)) {
    warn(
      `the live feed listens on ${opts.host}:${port}, so other machines can watch it` +
        (opts.token === null ? `; set ${feedFlagName('token')} to keep strangers out` : ' (token required)'),
    );
  }

  const pingTimer = setInterval(() => {
    for (const c of clients.values()) {
      if (!c.alive) {
        log(`viewer ${c.id} cut off: no answer to the last ping`);
        clients.delete(c.id);
        c.ws.terminate();
        continue;
      }
      c.alive = false;
      c.ws.ping();
    }
  }, opts.pingIntervalS * 1000);
  const statusTimer = setInterval(() => {
    for (const c of clients.values()) {
      if (c.queue.dropped === c.reportedDrops) continue;
      c.reportedDrops = c.queue.dropped;
      const status: StatusMessage = { type: 'status', dropped_frames: c.queue.dropped, clients: clients.size };
      enqueue(c, 'status', JSON.stringify(status));
    }
  }, STATUS_INTERVAL_MS);
  pingTimer.unref();
  statusTimer.unref();

  const query = opts.token === null ? '' : `?token=${encodeURIComponent(opts.token)}`;
  const base = `${urlHost(opts.host)}:${port}`;
  let closed = false;

  return {
    url: `http://${base}/${query}`,
    feedUrl: `ws://${base}${FEED_PATH}${query}`,
    port,
    sendFrame(rec) {
      totals.framesIn++;
      if (clients.size > 0) broadcast('frame', frameMessage(rec), true);
    },
    sendEvent(rec) {
      totals.eventsIn++;
      if (clients.size > 0) broadcast('keep', eventMessage(rec), false);
    },
    sendGap(info) {
      totals.gapsIn++;
      if (clients.size > 0) broadcast('keep', gapMessage(info), false);
    },
    stats() {
      return {
        clients: clients.size,
        ...totals,
        perClient: [...clients.values()].map((c) => ({
          id: c.id,
          remote: c.remote,
          frames: c.frames,
          framesWaiting: c.queue.framesWaiting,
          keptWaiting: c.queue.keptWaiting,
          queuedChars: c.queue.chars,
          bufferedAmount: c.ws.bufferedAmount,
          dropped: c.queue.dropped,
          sent: c.sent,
        })),
      };
    },
    async close() {
      if (closed) return;
      closed = true;
      clearInterval(pingTimer);
      clearInterval(statusTimer);
      const leaving = [...clients.values()].map(
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
      clients.clear();
      wss.close();
      await new Promise<void>((resolve) => {
        server.close(() => resolve());
        server.closeAllConnections();
      });
    },
  };
}

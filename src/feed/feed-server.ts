/**
 * The live feed: an HTTP server for the browser viewer (web-viewer/ at `/`) and a WebSocket
 * feed at `/feed` (messages of feed-protocol.ts). An I/O edge and a record sink: the analysis
 * hands it frames, events and gaps and it returns at once; each viewer has its own queue
 * (viewer-hub.ts), so a slow or stuck viewer only loses its own oldest frames. A viewer that
 * joins late gets the recent events and the tracks (recent-history.ts) right after hello.
 */
import { createHash, timingSafeEqual } from 'node:crypto';
import { createServer, type IncomingMessage, type ServerResponse } from 'node:http';
import type { AddressInfo, Socket } from 'node:net';
import type { Duplex } from 'node:stream';
import { WebSocketServer } from 'ws';
import { RuntimeFailure, UsageError } from '../util/errors.js';
import type { EvidenceMaps } from '../direction/evidence-map.js';
import { hostRule, refusedBecause, type HostRule } from '../util/host-check.js';
import type { ArrayGeometry } from '../geometry/array-geometry.js';
import type { GapRecord } from '../records/gap-record.js';
import type { EventRecord, FrameRecord } from '../records/record-types.js';
import type { RecordSink } from '../sinks/record-sink.js';
import { feedFlagName, isLoopbackHost, resolveFeedOptions, type FeedOptions } from './feed-options.js';
import { eventMessage, frameMessage, gapMessage, helloFromGeometry, mapsMessage, type FeedSettings } from './feed-protocol.js';
import { contentTypeOf, DEFAULT_WEB_ROOT, listStaticFiles, lookUpStaticPath, readStaticFile } from './static-files.js';
import { RecentHistory } from './recent-history.js';
import { ViewerHub, type FeedClientStats } from './viewer-hub.js';

export { SOCKET_HIGH_WATER_BYTES, MAX_KEPT_WAITING, type FeedClientStats } from './viewer-hub.js';

/** Path of the WebSocket feed. */
export const FEED_PATH = '/feed';
/** Largest message a viewer may send (bytes); a bigger one closes that viewer (1009). */
export const MAX_CLIENT_MESSAGE_BYTES = 4096;
/** Evidence maps go out at most this often (seconds of stream time): 10 a second is plenty for the eye. */
export const MAP_INTERVAL_S = 0.1;
/** How often a viewer that lost frames is told so (ms). */
const STATUS_INTERVAL_MS = 1000;

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

export interface FeedStats {
  clients: number;
  framesIn: number;
  eventsIn: number;
  gapsIn: number;
  /** Evidence maps sent (each to every viewer that asked). */
  mapsOut: number;
  /** Frames dropped over all viewers since the start. */
  framesDropped: number;
  refused: number;
  perClient: FeedClientStats[];
}

/** The feed as a record sink: frame(), event() and gap() go to every viewer and return at once. */
export interface FeedServer extends RecordSink {
  /** The page's URL (with ?token= when a token is set). */
  readonly url: string;
  /** The feed's WebSocket URL (with ?token= when a token is set). */
  readonly feedUrl: string;
  readonly port: number;
  frame(rec: FrameRecord): void;
  event(rec: EventRecord): void;
  gap(rec: GapRecord): void;
  /**
   * Whether a map of the hop at `timeS` is wanted: a viewer asked for maps and the last map
   * went out at least MAP_INTERVAL_S of stream time before (evidence-tap.ts asks every hop).
   */
  wantsMapAt(timeS: number): boolean;
  /** The evidence of the hop at `timeS` (its frame record's time_s) to the viewers that asked. */
  maps(timeS: number, maps: EvidenceMaps): void;
  close(): Promise<void>;
  stats(): FeedStats;
}

function digest(text: string): Buffer {
  return createHash('sha256').update(text, 'utf8').digest();
}

/**
 * Whether a request's URL carries the access token (`?token=`); always true without one.
 * Constant-time (hashing first makes the lengths equal). Shared by the fix view of locate.
 */
export function tokenGate(token: string | null): (url: URL) => boolean {
  if (token === null) return () => true;
  const expected = digest(token);
  return (url) => {
    const given = url.searchParams.get('token');
    return timingSafeEqual(digest(given ?? ''), expected) && given !== null;
  };
}

/** The headers of a served page's files: no caching, no sniffing, no referrer, only our own scripts and styles. */
export const PAGE_HEADERS = {
  'Cache-Control': 'no-cache',
  'X-Content-Type-Options': 'nosniff',
  'Referrer-Policy': 'no-referrer',
  'Content-Security-Policy': "default-src 'self'; connect-src 'self'; img-src 'self' data:; style-src 'self'; script-src 'self'; frame-ancestors 'none'",
} as const;

/** The host part of a URL for a bound address (0.0.0.0 -> 127.0.0.1, IPv6 in brackets). */
export function urlHost(host: string): string {
  if (host === '0.0.0.0') return '127.0.0.1';
  if (host === '::') return '[::1]';
  return host.includes(':') ? `[${host}]` : host;
}

export function refuseUpgrade(socket: Duplex, status: number, reason: string): void {
  socket.end(`HTTP/1.1 ${status} ${reason}\r\nConnection: close\r\nContent-Type: text/plain\r\n\r\n${reason}\n`);
}

/** Listen on --feed-host and --feed-port; bad addresses and ports in use become clear errors. Returns the port. */
export async function listen(server: ReturnType<typeof createServer>, opts: FeedOptions): Promise<number> {
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

/** The page, its script and style from the viewer's folder; the page itself needs the token. */
async function serveFile(req: IncomingMessage, res: ServerResponse, url: URL, files: ReadonlySet<string>, webRoot: string, allowed: (url: URL) => boolean): Promise<void> {
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
  res.writeHead(200, { 'Content-Type': contentTypeOf(name), 'Content-Length': body.length, ...PAGE_HEADERS });
  res.end(req.method === 'HEAD' ? undefined : body);
}

/** The HTTP server: GET and HEAD of the viewer's files; WebSocket upgrades at FEED_PATH with the token go to `accept`. */
function feedHttpServer(files: ReadonlySet<string>, webRoot: string, allowed: (url: URL) => boolean, hub: ViewerHub, log: (line: string) => void, hosts: HostRule): ReturnType<typeof createServer> {
  const wss = new WebSocketServer({ noServer: true, maxPayload: MAX_CLIENT_MESSAGE_BYTES, perMessageDeflate: false });
  const server = createServer((req, res) => {
    const wrongHost = refusedBecause(hosts, req.headers.host, req.headers.origin);
    if (wrongHost !== null) {
      log(`request from ${req.socket.remoteAddress ?? '?'} refused: ${wrongHost}`);
      res.writeHead(403, { 'Content-Type': 'text/plain; charset=utf-8' });
      res.end(`refused: ${wrongHost}; open the page by this machine's address, or list the name with --feed-allow-hosts\n`);
      return;
    }
    if (req.method !== 'GET' && req.method !== 'HEAD') {
      res.writeHead(405, { Allow: 'GET, HEAD', 'Content-Type': 'text/plain; charset=utf-8' });
      res.end('only GET and HEAD\n');
      return;
    }
    const url = new URL(req.url ?? '/', 'http://feed.invalid');
    serveFile(req, res, url, files, webRoot, allowed).catch(() => {
      if (!res.headersSent) res.writeHead(500);
      res.end();
    });
  });
  server.on('upgrade', (req: IncomingMessage, socket: Socket, head: Buffer) => {
    socket.on('error', () => undefined);
    const url = new URL(req.url ?? '/', 'http://feed.invalid');
    if (url.pathname !== FEED_PATH) return refuseUpgrade(socket, 404, 'Not Found');
    const wrongHost = refusedBecause(hosts, req.headers.host, req.headers.origin);
    if (wrongHost !== null) {
      hub.refused++;
      log(`viewer from ${req.socket.remoteAddress ?? '?'} refused: ${wrongHost}`);
      return refuseUpgrade(socket, 403, 'Forbidden');
    }
    if (!allowed(url)) {
      hub.refused++;
      log(`viewer from ${req.socket.remoteAddress ?? '?'} refused: missing or wrong token`);
      return refuseUpgrade(socket, 401, 'Unauthorized');
    }
    wss.handleUpgrade(req, socket, head, (ws) => hub.accept(ws, req));
  });
  server.on('close', () => wss.close());
  return server;
}

export async function startFeedServer(setup: FeedServerSetup): Promise<FeedServer> {
  const opts = resolveFeedOptions({
    port: setup.port,
    host: setup.host,
    token: setup.token,
    maxClients: setup.maxClients,
    queueBound: setup.queueBound,
    pingIntervalS: setup.pingIntervalS,
    allowHosts: setup.allowHosts,
  });
  const webRoot = setup.webRoot ?? DEFAULT_WEB_ROOT;
  const warn = setup.onWarning ?? ((m: string) => process.stderr.write(`bearline: warning: ${m}\n`));
  const log = setup.onLog ?? (() => undefined);
  const files = await listStaticFiles(webRoot).catch(() => {
    throw new RuntimeFailure(`the viewer's files are missing (${webRoot}): reinstall bearline`);
  });
  const allowed = tokenGate(opts.token);
  const history = new RecentHistory(setup.geometry.headingDeg);
  const hub = new ViewerHub(opts, JSON.stringify(helloFromGeometry(setup.geometry, setup.settings ?? {})), log, () => {
    const recent = history.catchUp();
    return recent === null ? null : JSON.stringify(recent);
  });
  const hosts = hostRule(opts.host, opts.port, opts.allowHosts);
  const server = feedHttpServer(files, webRoot, allowed, hub, log, hosts);
  const port = await listen(server, opts);
  hosts.port = port;
  if (!isLoopbackHost(opts.host)) {
    warn(
      `the live feed listens on ${opts.host}:${port}, so other machines can watch it` +
        (opts.token === null ? `; set ${feedFlagName('token')} to keep strangers out` : ' (token required)'),
    );
  }
  const pingTimer = setInterval(() => hub.pingSweep(), opts.pingIntervalS * 1000);
  const statusTimer = setInterval(() => hub.statusSweep(), STATUS_INTERVAL_MS);
  pingTimer.unref();
  statusTimer.unref();

  const query = opts.token === null ? '' : `?token=${encodeURIComponent(opts.token)}`;
  const base = `${urlHost(opts.host)}:${port}`;
  const totals = { framesIn: 0, eventsIn: 0, gapsIn: 0, mapsOut: 0 };
  let lastMapS = -Infinity;
  let closed = false;

  return {
    name: 'the live feed',
    wantsFrames: true,
    url: `http://${base}/${query}`,
    feedUrl: `ws://${base}${FEED_PATH}${query}`,
    port,
    frame(rec) {
      totals.framesIn++;
      history.frame(rec);
      if (hub.count > 0) hub.broadcast('frame', frameMessage(rec));
    },
    event(rec) {
      totals.eventsIn++;
      history.event(rec);
      if (hub.count > 0) hub.broadcast('keep', eventMessage(rec));
    },
    gap(rec) {
      totals.gapsIn++;
      history.gap(rec);
      if (hub.count > 0) hub.broadcast('keep', gapMessage(rec));
    },
    wantsMapAt(timeS) {
      return hub.count > 0 && (timeS - lastMapS >= MAP_INTERVAL_S || timeS < lastMapS) && hub.wantsMaps;
    },
    maps(timeS, maps) {
      lastMapS = timeS;
      totals.mapsOut++;
      hub.broadcastMaps(mapsMessage(timeS, maps));
    },
    stats() {
      return { clients: hub.count, ...totals, framesDropped: hub.framesDropped, refused: hub.refused, perClient: hub.stats() };
    },
    async close() {
      if (closed) return;
      closed = true;
      clearInterval(pingTimer);
      clearInterval(statusTimer);
      await hub.closeAll();
      await new Promise<void>((resolve) => {
        server.close(() => resolve());
        server.closeAllConnections();
      });
    },
  };
}

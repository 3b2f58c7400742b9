/**
 * The HTTP server of the live fix view (`locate --serve`): the page from web-viewer/fixes/ at
 * `/` and its WebSocket at `/feed`. Built from the live view's parts (src/feed/): the static
 * file list and lookup (nothing outside the folder can be served), the per-viewer queues
 * (ViewerHub: a slow page never slows locating) and the --feed-* options with their checks.
 * The page and the feed need the --feed-token when one is set.
 */
import { createServer, type IncomingMessage, type ServerResponse } from 'node:http';
import type { Socket } from 'node:net';
import { fileURLToPath } from 'node:url';
import { WebSocketServer } from 'ws';
import { feedFlagName, isLoopbackHost, type FeedOptions } from '../feed/feed-options.js';
import { listen, PAGE_HEADERS, refuseUpgrade, tokenGate, urlHost } from '../feed/feed-server.js';
import { hostRule, refusedBecause } from '../util/host-check.js';
import { contentTypeOf, listStaticFiles, lookUpStaticPath, readStaticFile } from '../feed/static-files.js';
import { ViewerHub } from '../feed/viewer-hub.js';
import { RuntimeFailure } from '../util/errors.js';

/** web-viewer/fixes/ of the checkout or package (two levels up from src/fleet/ and dist/fleet/). */
export const FIX_VIEW_ROOT = fileURLToPath(new URL('../../web-viewer/fixes/', import.meta.url));
const FEED_PATH = '/feed';
const MAX_CLIENT_MESSAGE_BYTES = 4096;

export interface FixViewServer {
  readonly url: string;
  readonly port: number;
  /** A message for every page; `keep` messages are never dropped for a slow page. */
  broadcast(text: string): void;
  /** Called when a page connects (to send it what it missed). */
  onViewer(fn: () => void): void;
  readonly viewers: number;
  close(): Promise<void>;
}

export async function startFixViewServer(opts: FeedOptions, hello: string, log: (line: string) => void, warn: (line: string) => void): Promise<FixViewServer> {
  const files = await listStaticFiles(FIX_VIEW_ROOT).catch(() => {
    throw new RuntimeFailure(`the fix view's files are missing (${FIX_VIEW_ROOT}): reinstall bearline`);
  });
  const allowed = tokenGate(opts.token);
  const hub = new ViewerHub(opts, hello, log);
  // The same Host and Origin rule as the live view's feed (src/util/host-check.ts): a page of
  // another site, or a rebound DNS name, cannot read the fixes.
  const hosts = hostRule(opts.host, opts.port, opts.allowHosts);
  const joined: (() => void)[] = [];
  const wss = new WebSocketServer({ noServer: true, maxPayload: MAX_CLIENT_MESSAGE_BYTES, perMessageDeflate: false });
  const serve = async (req: IncomingMessage, res: ServerResponse): Promise<void> => {
    const url = new URL(req.url ?? '/', 'http://view.invalid');
    const name = lookUpStaticPath(url.pathname, files);
    const text = (status: number, body: string): void => {
      res.writeHead(status, { 'Content-Type': 'text/plain; charset=utf-8' });
      res.end(body);
    };
    const wrongHost = refusedBecause(hosts, req.headers.host, req.headers.origin);
    if (wrongHost !== null) {
      log(`request from ${req.socket.remoteAddress ?? '?'} refused: ${wrongHost}`);
      return text(403, `refused: ${wrongHost}; open the page by this machine's address, or list the name with ${feedFlagName('allowHosts')}\n`);
    }
    if (req.method !== 'GET' && req.method !== 'HEAD') return text(405, 'only GET and HEAD\n');
    if (name === null) return text(404, 'not found\n');
    if (name === 'index.html' && !allowed(url)) return text(401, 'this view needs its access token: open the page with ?token=...\n');
    const body = await readStaticFile(FIX_VIEW_ROOT, name).catch(() => null);
    if (body === null) return text(404, 'not found\n');
    res.writeHead(200, { 'Content-Type': contentTypeOf(name), 'Content-Length': body.length, ...PAGE_HEADERS });
    res.end(req.method === 'HEAD' ? undefined : body);
  };
  const server = createServer((req, res) => {
    serve(req, res).catch(() => {
      if (!res.headersSent) res.writeHead(500);
      res.end();
    });
  });
  server.on('upgrade', (req: IncomingMessage, socket: Socket, head: Buffer) => {
    socket.on('error', () => undefined);
    const url = new URL(req.url ?? '/', 'http://view.invalid');
    const refuse = (status: number, reason: string): void => refuseUpgrade(socket, status, reason);
    if (url.pathname !== FEED_PATH) return refuse(404, 'Not Found');
    const wrongHost = refusedBecause(hosts, req.headers.host, req.headers.origin);
    if (wrongHost !== null) {
      hub.refused++;
      log(`viewer from ${req.socket.remoteAddress ?? '?'} refused: ${wrongHost}`);
      return refuse(403, 'Forbidden');
    }
    if (!allowed(url)) {
      hub.refused++;
      return refuse(401, 'Unauthorized');
    }
    wss.handleUpgrade(req, socket, head, (ws) => {
      hub.accept(ws, req);
      for (const fn of joined) fn();
    });
  });
  server.on('close', () => wss.close());
  const port = await listen(server, opts);
  hosts.port = port;
  if (!isLoopbackHost(opts.host)) {
    warn(`the fix view listens on ${opts.host}:${port}, so other machines can watch it` + (opts.token === null ? `; set ${feedFlagName('token')} to keep strangers out` : ' (token required)'));
  }
  const ping = setInterval(() => hub.pingSweep(), opts.pingIntervalS * 1000);
  ping.unref();
  const query = opts.token === null ? '' : `?token=${encodeURIComponent(opts.token)}`;
  let closed = false;
  return {
    url: `http://${urlHost(opts.host)}:${port}/${query}`,
    port,
    broadcast: (text) => {
      if (hub.count > 0) hub.broadcast('keep', text);
    },
    onViewer: (fn) => joined.push(fn),
    get viewers() {
      return hub.count;
    },
    async close() {
      if (closed) return;
      closed = true;
      clearInterval(ping);
      await hub.closeAll();
      await new Promise<void>((resolve) => {
        server.close(() => resolve());
        server.closeAllConnections();
      });
    },
  };
}

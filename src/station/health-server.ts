import { createServer, type Server } from 'node:http';
import { RuntimeFailure } from '../util/errors.js';
import { hostRule, isLoopbackName, refusedBecause } from '../util/host-check.js';
import { stderrWarning } from '../util/stderr-warning.js';
import type { StationStatus } from './status.js';

/**
 * The --health endpoint: GET /health (or /) answers the status snapshot as JSON. It listens on
 * 127.0.0.1 unless told otherwise; it has no authentication, so expose it only on a trusted
 * network.
 */
export interface HealthServer {
  readonly name: string;
  readonly port: number;
  close(): Promise<void>;
}

export interface HealthServerSetup {
  readonly port: number;
  readonly host: string;
  /** --health-allow-hosts (util/host-check.ts); null for none. */
  readonly allowHosts: string | null;
  /** Told when the endpoint is reachable from other machines (default: a line on stderr). */
  readonly onWarning?: (message: string) => void;
}

export async function startHealthServer(setup: HealthServerSetup, snapshot: () => StationStatus): Promise<HealthServer> {
  const { port, host } = setup;
  const hosts = hostRule(host, port, setup.allowHosts);
  const server: Server = createServer((req, res) => {
    const path = (req.url ?? '/').split('?')[0];
    let code = 200;
    let body: unknown;
    const wrongHost = refusedBecause(hosts, req.headers.host, req.headers.origin);
    if (wrongHost !== null) {
      code = 403;
      body = { error: `refused: ${wrongHost}; ask by this machine's address, or list the name with --health-allow-hosts` };
    } else if (req.method !== 'GET' && req.method !== 'HEAD') {
      code = 405;
      body = { error: 'only GET is served here' };
    } else if (path !== '/health' && path !== '/') {
      code = 404;
      body = { error: `no ${path} here; ask for /health` };
    } else {
      try {
        body = snapshot();
      } catch (err) {
        code = 500;
        body = { error: (err as Error).message };
      }
    }
    const text = JSON.stringify(body) + '\n';
    res.writeHead(code, { 'content-type': 'application/json', 'cache-control': 'no-store', 'content-length': Buffer.byteLength(text) });
    res.end(req.method === 'HEAD' ? undefined : text);
  });
  await new Promise<void>((resolve, reject) => {
    server.once('error', (err: NodeJS.ErrnoException) => {
      const why = err.code === 'EADDRINUSE' ? 'the port is in use' : err.code === 'EACCES' ? 'permission denied (ports below 1024 need privileges)' : err.message;
      reject(new RuntimeFailure(`cannot serve --health on ${host}:${port}: ${why}; pick another port`));
    });
    server.listen(port, host, () => resolve());
  });
  const addr = server.address();
  const bound = typeof addr === 'object' && addr ? addr.port : port;
  hosts.port = bound;
  if (!isLoopbackName(host)) {
    (setup.onWarning ?? stderrWarning)(`the health endpoint listens on ${host}:${bound}, so other machines can read it; it has no password: keep it on a trusted network, or use --health-host 127.0.0.1`);
  }
  return {
    name: `health endpoint on ${host}:${bound}`,
    port: bound,
    close: () =>
      new Promise<void>((resolve) => {
        server.close(() => resolve());
        server.closeAllConnections();
      }),
  };
}

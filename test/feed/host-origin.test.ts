import { request } from 'node:http';
import { afterEach, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { startFeedServer, type FeedServer, type FeedServerSetup } from '../../src/feed/feed-server.js';
import { startHealthServer, type HealthServer } from '../../src/station/health-server.js';
import { hostListProblem, hostRule, refusedBecause } from '../../src/util/host-check.js';
import { expectUsageFailure, runCli } from '../helpers/cli.js';
import { fakeGeometry } from '../helpers/feed-fake.js';

// Host and Origin checks of the feed and the health endpoint (issue 17 item 6). Sources: RFC 9110
// section 7.2 (Host names the target; a server may refuse requests for names it does not serve)
// and RFC 6455 section 4.2.2 / 10.2 (a server should check the Origin of a browser's WebSocket
// handshake and may refuse with an HTTP error); 403 Forbidden per RFC 9110 section 15.5.4.
// DNS rebinding (a page under the attacker's name resolving to 127.0.0.1) is common practice,
// no source: it is defeated by refusing Host names that are not this machine's.

const closers: (FeedServer | HealthServer)[] = [];
afterEach(async () => {
  for (const s of closers.splice(0)) await s.close();
});

async function feed(extra: Partial<FeedServerSetup> = {}): Promise<FeedServer> {
  const s = await startFeedServer({ port: 0, geometry: fakeGeometry(), onWarning: () => undefined, ...extra });
  closers.push(s);
  return s;
}

/** GET with a chosen Host and Origin header (fetch cannot set Host). */
function get(port: number, path: string, headers: Record<string, string>): Promise<{ status: number; body: string }> {
  return new Promise((resolve, reject) => {
    const req = request({ host: '127.0.0.1', port, path, headers }, (res) => {
      let body = '';
      res.setEncoding('utf8').on('data', (d: string) => (body += d));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, body }));
    });
    req.on('error', reject);
    req.end();
  });
}

/** The outcome of a WebSocket handshake with chosen headers: 'open' or the refusal's status. */
function handshake(port: number, headers: Record<string, string>): Promise<'open' | number> {
  return new Promise((resolve) => {
    const ws = new WebSocket(`ws://127.0.0.1:${port}/feed`, { headers });
    ws.on('open', () => {
      ws.terminate();
      resolve('open');
    });
    ws.on('unexpected-response', (_req, res) => {
      resolve(res.statusCode ?? 0);
      ws.terminate();
    });
    ws.on('error', () => undefined);
  });
}

describe('the live feed answers only to names of this machine and to its own page', () => {
  it('a foreign Host (DNS rebinding) is refused on the page and the feed; loopback names pass', async () => {
    const s = await feed();
    const here = `127.0.0.1:${s.port}`;
    expect((await get(s.port, '/', { Host: here })).status).toBe(200);
    expect((await get(s.port, '/', { Host: `localhost:${s.port}` })).status).toBe(200);
    expect((await get(s.port, '/', { Host: `[::1]:${s.port}` })).status).toBe(200);
    const evil = await get(s.port, '/', { Host: `frogs.attacker.example:${s.port}` });
    expect(evil.status).toBe(403);
    expect(evil.body).toMatch(/Host 'frogs\.attacker\.example:\d+' is not a name of this machine.*--feed-allow-hosts/);
    expect(await handshake(s.port, { Host: `frogs.attacker.example:${s.port}` })).toBe(403);
    expect(await handshake(s.port, { Host: here })).toBe('open');
  });

  it("a browser's Origin must be the page's own (same name and port); none (a script) passes", async () => {
    const s = await feed();
    const here = `127.0.0.1:${s.port}`;
    expect(await handshake(s.port, { Host: here, Origin: `http://${here}` })).toBe('open');
    expect(await handshake(s.port, { Host: here, Origin: `http://localhost:${s.port}` })).toBe('open');
    expect(await handshake(s.port, { Host: here })).toBe('open');
    expect(await handshake(s.port, { Host: here, Origin: 'https://frogs.attacker.example' })).toBe(403);
    expect(await handshake(s.port, { Host: here, Origin: 'http://localhost:3000' })).toBe(403); // another local web page
    expect(await handshake(s.port, { Host: here, Origin: 'null' })).toBe(403); // a sandboxed or file:// page
    expect((await get(s.port, '/', { Host: here, Origin: 'http://localhost:3000' })).status).toBe(403);
    expect(s.stats().refused).toBe(3);
  });

  it('--feed-allow-hosts adds names (a proxy in front may use its own scheme and port)', async () => {
    const s = await feed({ allowHosts: 'pond-station.example, 192.0.2.7' });
    expect(await handshake(s.port, { Host: `pond-station.example:${s.port}`, Origin: 'https://pond-station.example' })).toBe('open');
    expect(await handshake(s.port, { Host: `192.0.2.7:${s.port}` })).toBe('open');
    expect(await handshake(s.port, { Host: `other.example:${s.port}` })).toBe(403);
  });

  it('bound to every interface, it answers to this machine\'s own addresses, not to other names', () => {
    const rule = hostRule('0.0.0.0', 8417, null);
    expect(refusedBecause(rule, '127.0.0.1:8417', undefined)).toBeNull();
    expect(refusedBecause(rule, 'frogs.attacker.example:8417', undefined)).toMatch(/not a name of this machine/);
    const bound = hostRule('192.0.2.10', 8417, null);
    expect(refusedBecause(bound, '192.0.2.10:8417', 'http://192.0.2.10:8417')).toBeNull();
    expect(refusedBecause(bound, '192.0.2.11:8417', undefined)).toMatch(/not a name/);
    expect(refusedBecause(bound, undefined, undefined)).toMatch(/no readable Host/);
  });

  it('the list option is checked: names or addresses, no ports', () => {
    expect(hostListProblem('pond.example,192.0.2.7')).toBeNull();
    expect(hostListProblem('pond.example:8417')).toMatch(/not a host name/);
    expect(hostListProblem(' , ')).toMatch(/names no host/);
    expectUsageFailure(runCli(['listen', '--stdin', '--rate', '48000', '--channels', '2', '--spacing', '0.2', '--serve', '--feed-allow-hosts', 'bad host']), /--feed-allow-hosts.*not a host name/);
    expectUsageFailure(runCli(['listen', '--stdin', '--rate', '48000', '--channels', '2', '--spacing', '0.2', '--health', '0', '--health-allow-hosts', 'x_y:1']), /--health-allow-hosts.*not a host name/);
  });
});

describe('the health endpoint', () => {
  it('refuses a foreign Host or Origin with 403; loopback and listed names pass', async () => {
    const h = await startHealthServer({ port: 0, host: '127.0.0.1', allowHosts: 'marsh-gw.example' }, () => ({ station: 'pond' }) as never);
    closers.push(h);
    expect((await get(h.port, '/health', { Host: `127.0.0.1:${h.port}` })).status).toBe(200);
    expect((await get(h.port, '/health', { Host: `marsh-gw.example:${h.port}` })).status).toBe(200);
    const evil = await get(h.port, '/health', { Host: `frogs.attacker.example:${h.port}` });
    expect(evil.status).toBe(403);
    expect(JSON.parse(evil.body).error).toMatch(/not a name of this machine.*--health-allow-hosts/);
    expect((await get(h.port, '/health', { Host: `127.0.0.1:${h.port}`, Origin: 'http://localhost:3000' })).status).toBe(403);
  });

  it('--health-host 0.0.0.0 warns as the feed does for a non-loopback bind; 127.0.0.1 does not', async () => {
    const warnings: string[] = [];
    const wide = await startHealthServer({ port: 0, host: '0.0.0.0', allowHosts: null, onWarning: (w) => warnings.push(w) }, () => ({}) as never);
    closers.push(wide);
    const narrow = await startHealthServer({ port: 0, host: '127.0.0.1', allowHosts: null, onWarning: (w) => warnings.push(w) }, () => ({}) as never);
    closers.push(narrow);
    expect(warnings).toEqual([`the health endpoint listens on 0.0.0.0:${wide.port}, so other machines can read it; it has no password: keep it on a trusted network, or use --health-host 127.0.0.1`]);
  });
});

describe('the feed token on stderr', () => {
  it('is masked in the URLs listen prints (stderr goes to the journal)', () => {
    const token = 'bittern-boom-77';
    const r = runCli(['listen', '--stdin', '--rate', '48000', '--channels', '2', '--spacing', '0.2', '--quiet', '--serve', '--feed-port', '0', '--feed-token', token, '--health', '0', '--health-host', '0.0.0.0'], {
      input: Buffer.alloc(48_000 * 4),
      timeoutMs: 30_000,
    });
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr).not.toContain(token);
    expect(r.stderr).not.toContain('boom');
    expect(r.stderr).toMatch(/live view at http:\/\/127\.0\.0\.1:\d+\/\?token=bi\*{6} \(feed ws:\/\/127\.0\.0\.1:\d+\/feed\?token=bi\*{6}\) \(the token is masked/);
    expect(r.stderr).toMatch(/warning: the health endpoint listens on 0\.0\.0\.0:\d+, so other machines can read it/);
  });
});

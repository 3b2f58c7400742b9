import { connect } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startFeedServer, type FeedServer } from '../../src/feed/feed-server.js';
import { contentTypeOf, lookUpStaticPath } from '../../src/feed/static-files.js';
import { fakeGeometry } from '../helpers/feed-fake.js';

/** Send one raw request line (no client-side path clean-up) and return the status code. */
function rawStatus(port: number, requestLine: string): Promise<number> {
  return new Promise((resolve, reject) => {
    const sock = connect(port, '127.0.0.1', () => {
      sock.write(`${requestLine}\r\nHost: 127.0.0.1\r\nConnection: close\r\n\r\n`);
    });
    let text = '';
    sock.on('data', (d) => (text += d.toString('latin1')));
    sock.on('end', () => resolve(Number(/^HTTP\/1\.1 (\d{3})/.exec(text)?.[1] ?? 0)));
    sock.on('error', reject);
  });
}

describe('static files of the viewer', () => {
  let server: FeedServer;
  let base: string;
  beforeAll(async () => {
    server = await startFeedServer({ port: 0, geometry: fakeGeometry() });
    base = `http://127.0.0.1:${server.port}`;
  });
  afterAll(() => server.close());

  // Content types: IANA media types; text/javascript per RFC 9239, text/html and text/css per their RFCs.
  it.each([
    ['/', 'text/html; charset=utf-8', 'azimuth-readout'],
    ['/index.html', 'text/html; charset=utf-8', '<canvas id="dial"'],
    ['/viewer.js', 'text/javascript; charset=utf-8', 'requestAnimationFrame'],
    ['/style.css', 'text/css; charset=utf-8', '--ground'],
  ])('serves %s as %s', async (path, type, snippet) => {
    const res = await fetch(base + path);
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toBe(type);
    expect(res.headers.get('x-content-type-options')).toBe('nosniff');
    expect(await res.text()).toContain(snippet);
  });

  // Path traversal: OWASP "Path Traversal" attack patterns (dot-dot, encoded dots and slashes, NUL).
  it.each([
    'GET /../package.json HTTP/1.1',
    'GET /../../etc/passwd HTTP/1.1',
    'GET /%2e%2e/package.json HTTP/1.1',
    'GET /..%2fpackage.json HTTP/1.1',
    'GET /%2e%2e%2f%2e%2e%2fetc%2fpasswd HTTP/1.1',
    'GET /..%5cpackage.json HTTP/1.1',
    'GET /viewer.js%00.html HTTP/1.1',
    'GET //etc/passwd HTTP/1.1',
    'GET /./viewer.js/../../package.json HTTP/1.1',
    'GET /%ZZ HTTP/1.1',
    'GET /.git/config HTTP/1.1',
    'GET /nothing-here.html HTTP/1.1',
  ])('refuses %s with 404', async (line) => {
    // RFC 9110 section 15.5.5: 404 Not Found.
    expect(await rawStatus(server.port, line)).toBe(404);
  });

  it('refuses other methods (405) and a plain GET of the feed path (426)', async () => {
    // RFC 9110 sections 15.5.6 (405 Method Not Allowed) and 15.5.22 (426 Upgrade Required).
    expect((await fetch(`${base}/`, { method: 'POST', body: 'x' })).status).toBe(405);
    expect((await fetch(`${base}/feed`)).status).toBe(426);
    const head = await fetch(`${base}/viewer.js`, { method: 'HEAD' });
    expect(head.status).toBe(200);
    expect(await head.text()).toBe('');
  });

  it('looks paths up only in the list of files found at start', () => {
    const files = new Set(['index.html', 'viewer.js', 'img/marsh.png']);
    expect(lookUpStaticPath('/', files)).toBe('index.html');
    expect(lookUpStaticPath('/img/marsh.png', files)).toBe('img/marsh.png');
    expect(lookUpStaticPath('/img/../viewer.js', files)).toBeNull();
    expect(lookUpStaticPath('/img%2fmarsh.png', files)).toBeNull();
    expect(lookUpStaticPath('viewer.js', files)).toBeNull();
    expect(contentTypeOf('a.PNG')).toBe('image/png');
    expect(contentTypeOf('a.bin')).toBe('application/octet-stream');
  });
});

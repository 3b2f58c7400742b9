/**
 * The live fix view (web-viewer/fixes/, served by src/fleet/fix-view-server.ts) in a real
 * browser: the system's Chromium through playwright-core. The page gets the hello, a station
 * going offline, bearing rays and fixes (one a backfill revision), and must list them and draw
 * them where the numbers say: pixels are read back from its canvas at the stations' and the
 * fix's places (north up, metres around the origin). A page that joins late gets a snapshot.
 */
import { request } from 'node:http';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { resolveFeedOptions } from '../../src/feed/feed-options.js';
import { fixViewOf, helloOf, snapshotMessage, stationMessage } from '../../src/fleet/fix-view-messages.js';
import { startFixViewServer, type FixViewServer } from '../../src/fleet/fix-view-server.js';
import { locateEventLists } from '../../src/locate/locate.js';
import { parseStationFile, placeStations } from '../../src/locate/stations.js';
import { launchChromium, type Headless } from '../helpers/chromium.js';

const DEG = Math.PI / 180;
const STATIONS = [
  { id: 'reed-north', east_m: 0, north_m: 200, heading_deg: 180 },
  { id: 'dyke-east', east_m: 200, north_m: 0, heading_deg: 270 },
  { id: 'willow', east_m: 0, north_m: -200, heading_deg: 0 },
  { id: 'hide', east_m: -200, north_m: 0, heading_deg: 90 },
];
const CALLER = [40, 30];
const placed = placeStations(parseStationFile({ origin: { lat_deg: 52, lon_deg: 5 }, stations: STATIONS }, 'view'), 'view');

function bearing(from: { east_m: number; north_m: number }): number {
  return ((Math.atan2(CALLER[0]! - from.east_m, CALLER[1]! - from.north_m) / DEG) + 360) % 360;
}

let server: FixViewServer;
let browser: Headless;

beforeAll(async () => {
  server = await startFixViewServer(resolveFeedOptions({ port: 0 }), JSON.stringify(helloOf(placed)), () => undefined, () => undefined);
  browser = await launchChromium();
});
afterAll(async () => {
  await browser?.close();
  await server?.close();
});

describe('the fix view in Chromium', () => {
  it('lists the stations and fixes it is sent and draws them at their places', async () => {
    // A fix the file mode makes from exact bearings to the caller at (40, 30).
    const lists = Object.fromEntries(STATIONS.map((s) => [s.id, [{ start_s: 1, end_s: 1.2, utc: '2025-05-01T21:00:01.000Z', azimuth_deg: 0, bearing_deg: bearing(s), spread_deg: 1, confidence: 0.9, track: 1 }]]));
    const call = locateEventLists(placed, lists, { speedOfSound: 343 }).calls[0]!;
    expect(call.fix.ok).toBe(true);
    const page = await browser.context.newPage();
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    page.on('console', (m) => (m.type() === 'error' ? errors.push(m.text()) : undefined));
    await page.setViewportSize({ width: 1100, height: 800 });
    await page.goto(server.url);
    await page.waitForFunction(() => document.getElementById('link-state')?.textContent === 'live');
    server.broadcast(stationMessage('willow', false));
    for (const s of STATIONS) server.broadcast(JSON.stringify({ type: 'call', station: s.id, bearing_deg: bearing(s), utc: null }));
    server.broadcast(JSON.stringify(fixViewOf({ id: 'reed-north@2025-05-01T21:00:01.000Z', revision: 1, backfill: true, call }, placed)));
    await page.waitForFunction(() => (document.getElementById('fixes')?.children.length ?? 0) === 1);
    const listed = await page.locator('#fixes li').first().textContent();
    expect(listed).toContain('40.0 E 30.0 N');
    expect(listed).toContain('backfill');
    expect(await page.locator('#stations li.offline').textContent()).toContain('willow: offline');
    await page.waitForTimeout(200);
    await page.screenshot({ path: `${process.env.BEARLINE_VIEW_SHOT ?? '/dev/null'}` }).catch(() => undefined);
    // Pixels: the page's own mapping (extent of stations and fixes, north up) put into numbers here.
    const probe = await page.evaluate(
      ([east, north]) => {
        const c = document.getElementById('plot') as HTMLCanvasElement;
        const ctx = c.getContext('2d')!;
        // Stations span -200..200 m both ways: centre 0, half 200 x 1.25 = 250 m.
        const k = c.width / 500;
        const at = (e: number, n: number): [number, number] => [Math.round(c.width / 2 + e * k), Math.round(c.width / 2 - n * k)];
        const lit = (e: number, n: number): number => {
          const [x, y] = at(e, n);
          const d = ctx.getImageData(x - 4, y - 4, 9, 9).data;
          let bright = 0;
          for (let i = 0; i < d.length; i += 4) bright = Math.max(bright, d[i]! + d[i + 1]! + d[i + 2]!);
          return bright;
        };
        return { fix: lit(east!, north!), empty: lit(-120, 120), station: lit(200, 0) };
      },
      [CALLER[0]!, CALLER[1]!],
    );
    console.log(`canvas brightness (sum of RGB, max in 9x9): fix ${probe.fix}, station ${probe.station}, empty corner ${probe.empty}`);
    expect(probe.fix).toBeGreaterThan(probe.empty + 150);
    expect(probe.station).toBeGreaterThan(probe.empty + 150);
    expect(errors).toEqual([]);
    await page.close();
  });

  it('a page that joins late gets the states and fixes it missed (snapshot)', async () => {
    const page = await browser.context.newPage();
    await page.goto(server.url);
    await page.waitForFunction(() => document.getElementById('link-state')?.textContent === 'live');
    const counts = { fixes: 1, revised: 0, backfilled: 0, late: 0, unmatched: 0, unfixed: 0, stale: 0, forced: 0, repeats: 0, lost: 0, pending: 0, kept: 1 };
    server.broadcast(snapshotMessage({ willow: false, hide: true }, [], [], counts));
    await page.waitForFunction(() => document.getElementById('stations')?.textContent?.includes('willow: offline') ?? false);
    expect(await page.locator('#counts').textContent()).toContain('1 fixes');
    await page.close();
  });

  // The same Host and Origin rule as the live view's feed (src/util/host-check.ts; RFC 9110
  // section 7.2 for Host, RFC 6454 for Origin; 403 per RFC 9110 section 15.5.4).
  it('refuses a foreign Host (DNS rebinding) and the Origin of another site with 403; its own names pass', async () => {
    const get = (headers: Record<string, string>): Promise<number> =>
      new Promise((resolve, reject) => {
        const req = request({ host: '127.0.0.1', port: server.port, path: '/', headers }, (res) => {
          res.resume();
          res.on('end', () => resolve(res.statusCode ?? 0));
        });
        req.on('error', reject);
        req.end();
      });
    expect(await get({ Host: `127.0.0.1:${server.port}` })).toBe(200);
    expect(await get({ Host: `localhost:${server.port}` })).toBe(200);
    expect(await get({ Host: `marsh.attacker.example:${server.port}` })).toBe(403);
    expect(await get({ Host: `127.0.0.1:${server.port}`, Origin: 'http://marsh.attacker.example' })).toBe(403);
  });
});

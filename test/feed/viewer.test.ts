import { mkdirSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fakeGeometry, startFeedFake, type FeedFake } from '../helpers/feed-fake.js';
import { launchChromium, type Headless } from '../helpers/chromium.js';

const ARTIFACTS = fileURLToPath(new URL('../.artifacts/', import.meta.url));

/** Centroid of the dial's teal (track 1) pixels relative to the dial's centre, in units of its half-width. */
async function tealCentroid(page: Page): Promise<{ x: number; y: number; n: number }> {
  return page.evaluate(() => {
    const c = document.getElementById('dial') as HTMLCanvasElement;
    const { width: w, height: h } = c;
    const px = (c.getContext('2d') as CanvasRenderingContext2D).getImageData(0, 0, w, h).data;
    let sx = 0;
    let sy = 0;
    let n = 0;
    for (let y = 0; y < h; y++) {
      for (let x = 0; x < w; x++) {
        const i = (y * w + x) * 4;
        const [r, g, b] = [px[i], px[i + 1], px[i + 2]];
        if (g - r > 70 && b - r > 60) {
          sx += x;
          sy += y;
          n++;
        }
      }
    }
    return { x: n ? (sx / n - w / 2) / (w / 2) : 0, y: n ? (sy / n - h / 2) / (h / 2) : 0, n };
  });
}

describe('browser viewer in headless Chromium', () => {
  let chrome: Headless;
  beforeAll(async () => {
    mkdirSync(ARTIFACTS, { recursive: true });
    chrome = await launchChromium();
  });
  afterAll(async () => {
    await chrome?.close();
  });

  it('shows the known direction and bearing of the test source, and reconnects after a restart', async () => {
    let fake: FeedFake = await startFeedFake();
    const port = fake.server.port;
    const page = await chrome.context.newPage();
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    try {
      await page.setViewportSize({ width: 1280, height: 800 });
      await page.goto(fake.server.url);
      await page.waitForSelector('#link-state[data-state="live"]');
      // The fake's chorus sits at azimuth 52.5; the array's heading is 30, so its bearing is
      // 52.5 + 30 = 82.5 (interface.md: bearing_deg = azimuth + heading_deg).
      await page.waitForFunction(() => document.getElementById('azimuth-readout')?.textContent === '52.5°');
      expect(await page.textContent('#bearing-readout')).toBe('82.5°');
      expect(await page.getAttribute('#azimuth-readout', 'data-value')).toBe('52.5');
      await page.waitForFunction(() => document.querySelectorAll('#event-list li .az').length >= 2, undefined, { timeout: 5000 });
      expect(await page.textContent('#array-name')).toContain('reed-bed-square-10cm · 4 mics');
      await page.waitForTimeout(600); // let the trails grow for the picture
      await page.screenshot({ path: `${ARTIFACTS}viewer-desktop.png` });

      await page.setViewportSize({ width: 390, height: 844 });
      await page.waitForTimeout(300);
      await page.screenshot({ path: `${ARTIFACTS}viewer-phone.png`, fullPage: true });
      const phone = await page.evaluate(() => ({
        scrollWidth: document.documentElement.scrollWidth,
        readoutPx: parseFloat(getComputedStyle(document.getElementById('azimuth-readout') as HTMLElement).fontSize),
        readoutTop: (document.getElementById('azimuth-readout') as HTMLElement).getBoundingClientRect().top,
      }));
      expect(phone.scrollWidth).toBeLessThanOrEqual(390); // no sideways scrolling on a phone
      expect(phone.readoutPx).toBeGreaterThanOrEqual(32); // large text
      expect(phone.readoutTop).toBeLessThan(844); // the readout is on the first screen

      // Restart the server on the same port with the chorus moved: the page must come back by itself.
      expect(await page.evaluate(() => (window as unknown as { bearlineViewer: { counts: { connects: number } } }).bearlineViewer.counts.connects)).toBe(1);
      await fake.stop();
      await page.waitForSelector('#link-state[data-state="lost"]');
      fake = await startFeedFake({ port, scene: { chorusAzimuthDeg: -61 } });
      await page.waitForSelector('#link-state[data-state="live"]', { timeout: 15000 });
      await page.waitForFunction(() => document.getElementById('azimuth-readout')?.textContent === '-61.0°');
      expect(await page.evaluate(() => (window as unknown as { bearlineViewer: { counts: { connects: number } } }).bearlineViewer.counts.connects)).toBe(2);
      expect(errors).toEqual([]);
    } finally {
      await page.close();
      await fake.stop();
    }
  });

  it('passes the page token on to the feed, and shows the close reason when the feed is full', async () => {
    const fake = await startFeedFake({ token: 'spring-peeper-9', maxClients: 1 });
    const page = await chrome.context.newPage();
    const second = await chrome.context.newPage();
    try {
      await page.goto(fake.server.url);
      await page.waitForSelector('#link-state[data-state="live"]');
      await second.goto(fake.server.url);
      // Read text and state together: the page retries (state 'connecting') half a second later.
      await second.waitForFunction(() => {
        const link = document.getElementById('link-state');
        return /feed full/.test(link?.textContent ?? '') && link?.dataset.state === 'lost';
      });
      expect(fake.server.stats().clients).toBe(1);
    } finally {
      await second.close();
      await page.close();
      await fake.stop();
    }
  });

  // interface.md: azimuth 0 = front (+y), +90 = right (+x), -90 = left; the brief: front drawn up.
  it.each([
    [90, 'right', (c: { x: number; y: number }) => c.x > 0.4 && Math.abs(c.y) < 0.15],
    [-90, 'left', (c: { x: number; y: number }) => c.x < -0.4 && Math.abs(c.y) < 0.15],
    [0, 'up', (c: { x: number; y: number }) => c.y < -0.4 && Math.abs(c.x) < 0.15],
    [180, 'down', (c: { x: number; y: number }) => c.y > 0.4 && Math.abs(c.x) < 0.15],
  ])('draws a source at azimuth %d toward the %s of the dial', async (az, _where, placed) => {
    const fake = await startFeedFake({
      scene: { chorusAzimuthDeg: az, passingBird: false, events: false, geometry: fakeGeometry(null) },
    });
    const page = await chrome.context.newPage();
    try {
      await page.setViewportSize({ width: 900, height: 700 });
      await page.goto(fake.server.url);
      await page.waitForFunction((want) => document.getElementById('azimuth-readout')?.textContent === want, `${az.toFixed(1)}°`);
      expect(await page.textContent('#bearing-readout')).toBe('—'); // no heading, no bearing
      await page.waitForTimeout(200);
      const c = await tealCentroid(page);
      expect(c.n).toBeGreaterThan(200);
      expect(placed(c), `centroid ${JSON.stringify(c)}`).toBe(true);
    } finally {
      await page.close();
      await fake.stop();
    }
  });
});

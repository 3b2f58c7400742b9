/**
 * The viewer's history (issue 16, items 2 and 3) in headless Chromium on the fake wetland feed
 * (test/helpers/feed-fake.ts: chorus track 1 at azimuth 52.5, bird track 2, a call every 1.5
 * and 2 s): a viewer that joins late lists the calls made before it came; the history strip
 * draws them; the legend names the tracks with their calls; track colours stay apart from the
 * band-vote colours; a 3-D array shows elevation; all of it fits a phone's width.
 */
import { mkdirSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ArrayGeometry } from '../../src/geometry/array-geometry.js';
import { fakeGeometry, startFeedFake } from '../helpers/feed-fake.js';
import { launchChromium, type Headless } from '../helpers/chromium.js';

const ARTIFACTS = fileURLToPath(new URL('../.artifacts/', import.meta.url));

interface ViewerProbe {
  counts: Record<string, number>;
  colours: { tracks: string[]; votes: string[] };
}

const viewer = (page: Page): Promise<ViewerProbe> => page.evaluate(() => (window as unknown as { bearlineViewer: ViewerProbe }).bearlineViewer);

/** Pixels of the history canvas' plot area close to a colour. */
async function stripPixels(page: Page, hex: string): Promise<number> {
  return page.evaluate((hex) => {
    const want = [1, 3, 5].map((i) => parseInt(hex.slice(i, i + 2), 16));
    const c = document.getElementById('history') as HTMLCanvasElement;
    const px = (c.getContext('2d') as CanvasRenderingContext2D).getImageData(0, 0, c.width, c.height).data;
    let n = 0;
    for (let i = 0; i < px.length; i += 4) if (Math.abs(px[i]! - want[0]!) + Math.abs(px[i + 1]! - want[1]!) + Math.abs(px[i + 2]! - want[2]!) < 40) n++;
    return n;
  }, hex);
}

function rgb(hex: string): number[] {
  return [1, 3, 5].map((i) => parseInt(hex.slice(i, i + 2), 16));
}

describe('viewer history, legend and catch-up', () => {
  let chrome: Headless;
  beforeAll(async () => {
    mkdirSync(ARTIFACTS, { recursive: true });
    chrome = await launchChromium();
  });
  afterAll(async () => {
    await chrome?.close();
  });

  it('a viewer that joins late lists the earlier calls at once, draws them on the strip and names the tracks in the legend', async () => {
    const fake = await startFeedFake();
    // Let the station run alone for 6.5 s: chorus calls at 1.5, 3, 4.5, 6 s and bird calls at 2, 4, 6 s.
    await new Promise((r) => setTimeout(r, 6500));
    const before = fake.pushed.events;
    expect(before).toBeGreaterThanOrEqual(6);
    const page = await chrome.context.newPage();
    try {
      await page.setViewportSize({ width: 1280, height: 1000 });
      await page.goto(fake.server.url);
      await page.waitForFunction(() => (window as unknown as { bearlineViewer: ViewerProbe }).bearlineViewer.counts.catchUps === 1);
      // Right after the catch-up, before much else can come: the earlier calls are listed.
      const listed = await page.locator('#event-list li .az').count();
      expect(listed).toBeGreaterThanOrEqual(6);
      await page.waitForTimeout(700);
      const v = await viewer(page);
      expect(v.counts.historyDots).toBeGreaterThanOrEqual(before);
      // Strip: dots in track 1's and track 2's colours.
      expect(await stripPixels(page, v.colours.tracks[1]!)).toBeGreaterThan(40);
      expect(await stripPixels(page, v.colours.tracks[2]!)).toBeGreaterThan(20);
      // Legend: both tracks, bearings = azimuth + heading 30 (interface.md), their calls.
      const rows = await page.$$eval('#track-legend tr[data-track]', (trs) => trs.map((tr) => [...tr.querySelectorAll('td')].map((td) => td.textContent)));
      const chorus = rows.find((r) => r[0] === '#1');
      expect(chorus, JSON.stringify(rows)).toBeDefined();
      expect(chorus![1]).toBe('82.5°');
      expect(Number(chorus![2])).toBeGreaterThanOrEqual(4);
      expect(rows.some((r) => r[0] === '#2')).toBe(true);
      // 1 to 10 minutes can be chosen.
      expect(await page.$$eval('#history-span option', (os) => os.map((o) => (o as HTMLOptionElement).value))).toEqual(['60', '120', '300', '600']);
      await page.selectOption('#history-span', '60');
      await page.screenshot({ path: `${ARTIFACTS}viewer-late-history.png` });
    } finally {
      await page.close();
      await fake.stop();
    }
  });

  it('keeps track colours apart from the band-vote colours', async () => {
    const fake = await startFeedFake();
    const page = await chrome.context.newPage();
    try {
      await page.goto(fake.server.url);
      const { colours } = await viewer(page);
      expect(colours.tracks.length).toBeGreaterThanOrEqual(6);
      // City-block RGB distance of every track colour from every vote colour (common practice, no source: 100 of 765 tells apart at a glance).
      let nearest = Infinity;
      for (const t of colours.tracks) for (const vote of colours.votes) nearest = Math.min(nearest, rgb(t).reduce((s, c, i) => s + Math.abs(c - rgb(vote)[i]!), 0));
      expect(nearest).toBeGreaterThan(100);
    } finally {
      await page.close();
      await fake.stop();
    }
  });

  it('shows elevation for a 3-D array (readout, legend, evidence over elevation), and fits a phone width with the strip and legend', async () => {
    const base = fakeGeometry(30);
    const tall: ArrayGeometry = { ...base, name: 'reed-bed-tetra', mics: base.mics.map((m, i) => ({ ...m, position: [m.position[0], m.position[1], i === 3 ? 0.08 : 0] as const })) };
    const fake = await startFeedFake({ scene: { geometry: tall } });
    const page = await chrome.context.newPage();
    try {
      await page.setViewportSize({ width: 390, height: 844 });
      await page.goto(fake.server.url);
      await page.waitForFunction(() => document.getElementById('azimuth-readout')?.textContent === '52.5°');
      expect(await page.isVisible('#elevation-cell')).toBe(true);
      await page.waitForFunction(() => document.querySelectorAll('#track-legend tr[data-track]').length >= 1, undefined, { timeout: 5000 });
      expect(await page.$$eval('#track-legend th', (ths) => ths.map((t) => t.textContent))).toContain('elev.');
      // The evidence over azimuth and elevation (8 rows of the direction map for a 3-D array) is drawn.
      await page.waitForFunction(() => (window as unknown as { bearlineViewer: ViewerProbe }).bearlineViewer.counts.elevationCells > 50, undefined, { timeout: 5000 });
      expect(await page.isVisible('#elev-map')).toBe(true);
      await page.waitForTimeout(2500);
      await page.screenshot({ path: `${ARTIFACTS}viewer-phone-history.png`, fullPage: true });
      const phone = await page.evaluate(() => ({
        scrollWidth: document.documentElement.scrollWidth,
        strip: (document.getElementById('history') as HTMLElement).getBoundingClientRect().width,
      }));
      expect(phone.scrollWidth).toBeLessThanOrEqual(390);
      expect(phone.strip).toBeGreaterThan(300);
    } finally {
      await page.close();
      await fake.stop();
    }
  });
});

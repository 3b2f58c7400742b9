/**
 * `bearline report` on the logs of a simulated night (the built-in wetland scene, 60 s): the
 * page is read back by an independent HTML parser (headless Chromium), and what it draws is
 * held against the log it came from and against the simulator's truth (the scene's known
 * source directions; bearing = azimuth + the array's heading_deg, interface.md).
 */
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { expectUsageFailure, runCli } from '../helpers/cli.js';
import { launchChromium, type Headless } from '../helpers/chromium.js';
import { tempDir } from '../helpers/temp-dir.js';

const ARTIFACTS = fileURLToPath(new URL('../.artifacts/', import.meta.url));
const HEADING_DEG = 30; // configs/scenes/wetland-dusk.json: array.heading_deg

interface LogEvent {
  start_s: number;
  bearing_deg: number;
  azimuth_deg: number;
  track: number;
}

interface Drawn {
  svgs: string[];
  points: { track: string; t: number; a: number }[];
  gaps: { x: number; width: number; lost: number }[];
  rows: { track: number; calls: number; mean: number }[];
}

async function readPage(page: Page, file: string): Promise<Drawn> {
  await page.goto(`file://${file}`);
  return page.evaluate(() => ({
    svgs: [...document.querySelectorAll('svg')].map((s) => s.id),
    points: [...document.querySelectorAll('#time-plot g.series circle')].map((c) => ({
      track: (c.parentElement as Element).getAttribute('data-track') as string,
      t: Number(c.getAttribute('data-t')),
      a: Number(c.getAttribute('data-a')),
    })),
    gaps: [...document.querySelectorAll('#time-plot g.gaps rect')].map((r) => ({
      x: Number(r.getAttribute('x')),
      width: Number(r.getAttribute('width')),
      lost: Number(r.getAttribute('data-lost-s')),
    })),
    rows: [...document.querySelectorAll('#track-table tr[data-track]')].map((r) => ({
      track: Number(r.getAttribute('data-track')),
      calls: Number(r.getAttribute('data-calls')),
      mean: Number(r.getAttribute('data-mean')),
    })),
  }));
}

function circularMean(deg: number[]): number {
  const s = deg.reduce((a, d) => a + Math.sin((d * Math.PI) / 180), 0);
  const c = deg.reduce((a, d) => a + Math.cos((d * Math.PI) / 180), 0);
  return ((Math.atan2(s, c) * 180) / Math.PI + 360) % 360;
}

function angleGap(a: number, b: number): number {
  return Math.abs(((a - b + 540) % 360) - 180);
}

describe('bearline report on a simulated night', () => {
  const tmp = tempDir('report');
  const dir = tmp.dir;
  let chrome: Headless;
  let page: Page;
  let events: LogEvent[];
  let truth: { time_s: number; source: string; azimuth_deg: number }[];

  beforeAll(async () => {
    mkdirSync(ARTIFACTS, { recursive: true });
    const sim = runCli(['simulate', '--out', join(dir, 'dusk.wav')]);
    expect(sim.status, sim.stderr).toBe(0);
    const scan = runCli(['scan', join(dir, 'dusk.wav'), '--array', join(dir, 'dusk.array.json'), '--out', join(dir, 'dusk.events.jsonl')]);
    expect(scan.status, scan.stderr).toBe(0);
    const csv = runCli(['scan', join(dir, 'dusk.wav'), '--array', join(dir, 'dusk.array.json'), '--format', 'csv', '--out', join(dir, 'dusk.events.csv')]);
    expect(csv.status, csv.stderr).toBe(0);
    events = readFileSync(join(dir, 'dusk.events.jsonl'), 'utf8').trim().split('\n').map((l) => JSON.parse(l) as LogEvent);
    truth = readFileSync(join(dir, 'dusk.truth.jsonl'), 'utf8').trim().split('\n').map((l) => JSON.parse(l));
    // Two stretches of lost capture, as a live station logs them (records/gap-record.ts).
    writeFileSync(join(dir, 'dusk.gaps.jsonl'), '{"gap":"device lost","start_s":20,"end_s":23}\n{"gap":"overrun","start_s":41.5,"end_s":41.9}\n');
    chrome = await launchChromium();
    page = await chrome.context.newPage();
    await page.setViewportSize({ width: 1200, height: 900 });
  });
  afterAll(async () => {
    await chrome?.close();
  });

  it('draws one SVG per picture, refers to nothing outside the file, and plots every call of the log at its bearing', async () => {
    const out = join(dir, 'night.html');
    const r = runCli(['report', join(dir, 'dusk.events.jsonl'), join(dir, 'dusk.gaps.jsonl'), '--out', out]);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/night\.html: \d+ calls on \d+ tracks/);
    const html = readFileSync(out, 'utf8');
    expect(html).not.toMatch(/https?:/i);
    expect(html).not.toMatch(/<script|<link|src=|@import|url\(/i);
    const drawn = await readPage(page, out);
    await page.screenshot({ path: `${ARTIFACTS}report-night.png`, fullPage: true });
    expect(drawn.svgs).toEqual(['time-plot', 'rose-plot', 'rate-plot']);
    expect(events.length).toBeGreaterThan(60);
    // Every call is drawn once, at its own time and compass bearing, in its track's group.
    const key = (track: string | number, t: number, a: number): string => `${track}|${t.toFixed(3)}|${a.toFixed(2)}`;
    const fromLog = events.map((e) => key(e.track, e.start_s, e.bearing_deg)).sort();
    const fromPage = drawn.points.map((p) => key(p.track, p.t, p.a)).sort();
    expect(fromPage).toEqual(fromLog);
    // The table's counts per track are the log's.
    const perTrack = new Map<number, number>();
    for (const e of events) perTrack.set(e.track, (perTrack.get(e.track) ?? 0) + 1);
    expect(new Map(drawn.rows.map((row) => [row.track, row.calls]))).toEqual(perTrack);
    // The two gaps are shaded where they are: 20-23 s (3 s lost) and 41.5-41.9 s.
    expect(drawn.gaps.map((g) => g.lost)).toEqual([3, 0.4]);
    expect(drawn.gaps[0]!.x).toBeLessThan(drawn.gaps[1]!.x);
  });

  it('puts the choruses where the simulator put them (truth azimuth + heading), within 3 degrees', async () => {
    const out = join(dir, 'night.html');
    const drawn = await readPage(page, out);
    for (const source of ['frogs-reeds', 'frogs-pond']) {
      const truthBearing = (circularMean(truth.filter((t) => t.source === source).map((t) => t.azimuth_deg)) + HEADING_DEG) % 360;
      // The busiest track nearest the source's true bearing.
      const near = drawn.rows.filter((row) => angleGap(row.mean, truthBearing) < 3).sort((a, b) => b.calls - a.calls);
      expect(near.length, `${source} at ${truthBearing.toFixed(1)}: ${JSON.stringify(drawn.rows)}`).toBeGreaterThan(0);
      expect(near[0]!.calls).toBeGreaterThan(20);
    }
  });

  it('reads the CSV log the same as the JSON Lines one, and --from/--to/--tracks cut the page', async () => {
    const csvOut = join(dir, 'night-csv.html');
    const r = runCli(['report', join(dir, 'dusk.events.csv'), '--out', csvOut]);
    expect(r.status, r.stderr).toBe(0);
    const fromCsv = await readPage(page, csvOut);
    expect(fromCsv.points.length).toBe(events.length);

    const cutOut = join(dir, 'cut.html');
    const cut = runCli(['report', join(dir, 'dusk.events.jsonl'), '--from', '10', '--to', '30', '--tracks', '1', '--out', cutOut]);
    expect(cut.status, cut.stderr).toBe(0);
    const drawn = await readPage(page, cutOut);
    const want = events.filter((e) => e.track === 1 && e.start_s >= 10 && e.start_s <= 30);
    expect(want.length).toBeGreaterThan(3);
    expect(drawn.points.map((p) => p.t).sort((a, b) => a - b)).toEqual(want.map((e) => Number(e.start_s.toFixed(3))).sort((a, b) => a - b));
    expect(new Set(drawn.points.map((p) => p.track))).toEqual(new Set(['1']));
  });

  it('refuses bad input with exit 2 and a message, and leaves an existing page as it was', () => {
    const out = join(dir, 'keep.html');
    writeFileSync(out, 'the page of last night\n');
    const bad = join(dir, 'bad.jsonl');
    writeFileSync(bad, '{"start_s":1,"end_s":1.2,"azimuth_deg":10,"spread_deg":1,"confidence":0.9,"track":1}\n{"start_s":2,"end_s":"soon"}\n{"start_s":3,"end_s":3.2,"azimuth_deg":10,"spread_deg":1,"confidence":0.9,"track":1}\n');
    expectUsageFailure(runCli(['report', bad, '--out', out]), /bad\.jsonl line 2: field 'end_s' must be a number/);
    expect(readFileSync(out, 'utf8')).toBe('the page of last night\n');
    expect(existsSync(`${out}.partial-`)).toBe(false);

    const frames = join(dir, 'frames.jsonl');
    writeFileSync(frames, '{"time_s":0.1,"azimuth_deg":12,"elevation_deg":null,"confidence":0.9,"tdoa_s":[0.0001],"level_dbfs":-20}\n');
    expectUsageFailure(runCli(['report', frames, '--out', out]), /frame record .* give the events file/);
    expectUsageFailure(runCli(['report', join(dir, 'dusk.events.jsonl')]), /--out FILE\.html/);
    expectUsageFailure(runCli(['report', join(dir, 'dusk.events.jsonl'), '--out', join(dir, 'dusk.events.jsonl')]), /would overwrite the input/);
    expectUsageFailure(runCli(['report', join(dir, 'no-such.jsonl'), '--out', out]), /does not exist/);
    expectUsageFailure(runCli(['report', join(dir, 'dusk.events.jsonl'), '--from', 'dawn', '--out', out]), /--from.*'dawn' is not a time/);
    expectUsageFailure(runCli(['report', join(dir, 'dusk.events.jsonl'), '--from', '2026-05-01T21:00Z', '--out', out]), /stream times only .*seconds/);
    expectUsageFailure(runCli(['report', join(dir, 'dusk.events.jsonl'), '--tracks', '99', '--out', out]), /leaves none of the \d+ calls; the logs hold tracks 1, 2/);
    expect(readFileSync(out, 'utf8')).toBe('the page of last night\n');
  });

  it('skips a last line cut short (a log still being written) with a warning', () => {
    const torn = join(dir, 'torn.jsonl');
    writeFileSync(torn, readFileSync(join(dir, 'dusk.events.jsonl'), 'utf8') + '{"start_s":70,"end_s":7');
    const r = runCli(['report', torn, '--out', join(dir, 'torn.html')]);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/warning: .*torn\.jsonl: the last line is cut short/);
    expect(r.stderr).toContain(`${events.length} calls`);
  });
});

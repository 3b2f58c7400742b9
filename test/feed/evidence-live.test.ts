/**
 * The delay map, live (issue 16, item 1): `scan --serve` replays a simulated call sequence to
 * the feed; a viewer that subscribes with "maps": true gets, per hop it is sent, each pair's
 * correlation over its physically possible lags and the steered response over azimuth; one
 * that does not gets none. The map's peak lag is the frame record's tdoa_s of the same hop
 * (the analysis' chosen delay, refined below a sample), and the direction map's peak is the
 * frame's azimuth. The physical lag limit is |p_a - p_b| / c (interface.md).
 * Then the viewer in headless Chromium draws it: the evidence ring and the lag plot.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BIN, runCli } from '../helpers/cli.js';
import { launchChromium, type Headless } from '../helpers/chromium.js';
import { tempDir } from '../helpers/temp-dir.js';
import { probe, type FeedMessage } from '../helpers/ws-probe.js';

const ARTIFACTS = fileURLToPath(new URL('../.artifacts/', import.meta.url));
const RATE = 48000;

/** Invented scene (test only): a frog calling at compass bearing 40 (azimuth 10: the array faces 30), 12 m off, on a 10 cm square. */
const SCENE = {
  sample_rate_hz: RATE,
  duration_s: 6,
  seed: 7,
  array: { geometry: 'square-10cm', position_m: [0, 0, 1.2], heading_deg: 30 },
  sources: [
    {
      name: 'frog',
      position_m: [12 * Math.sin((40 * Math.PI) / 180), 12 * Math.cos((40 * Math.PI) / 180), 1.2],
      signal: { type: 'tone', f0_hz: 520, harmonics: [1, 0.6, 0.35, 0.2], pulse_rate_hz: 30, pulse_duty: 0.6 },
      level: { db_spl_at_1m: 90 },
      calls: { start_s: 0.3, length_s: 0.5, every_s: 0.8, jitter_s: 0.05 },
    },
  ],
  noise: { floor_dbfs: -70 },
};

interface Served {
  child: ChildProcess;
  feedUrl: string;
  pageUrl: string;
  stderr: string[];
}

/** Start `scan --serve` and read the URLs it prints; the replay starts when a viewer connects. */
function serve(wav: string, array: string, speed: number): Promise<Served> {
  const child = spawn(process.execPath, [BIN, 'scan', wav, '--array', array, '--serve', '--feed-port', '0', '--speed', String(speed), '--out', '/dev/null']);
  const stderr: string[] = [];
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`scan --serve printed no URL: ${stderr.join('')}`)), 20000);
    child.stderr!.on('data', (d: Buffer) => {
      stderr.push(d.toString());
      const m = /live view at (\S+) \(feed (\S+)\)/.exec(stderr.join(''));
      if (m) {
        clearTimeout(timer);
        resolve({ child, pageUrl: m[1]!, feedUrl: m[2]!, stderr });
      }
    });
    child.on('exit', () => reject(new Error(`scan --serve ended: ${stderr.join('')}`)));
  });
}

function exited(child: ChildProcess): Promise<number | null> {
  return new Promise((resolve) => (child.exitCode !== null ? resolve(child.exitCode) : child.on('exit', (code) => resolve(code))));
}

describe('the delay map on the live feed', () => {
  const dir = tempDir('evidence').dir;
  const wav = join(dir, 'frog.wav');
  const array = join(dir, 'frog.array.json');
  let chrome: Headless;
  beforeAll(async () => {
    mkdirSync(ARTIFACTS, { recursive: true });
    writeFileSync(join(dir, 'scene.json'), JSON.stringify(SCENE));
    const r = runCli(['simulate', '--scene', join(dir, 'scene.json'), '--out', wav]);
    expect(r.status, r.stderr).toBe(0);
    chrome = await launchChromium();
  });
  afterAll(async () => {
    await chrome?.close();
  });

  it("goes only to a viewer that asks; its peak lag is the same hop's tdoa_s and its direction map peaks at the frame's azimuth", async () => {
    const served = await serve(wav, array, 4);
    const asking = probe(served.feedUrl);
    await asking.waitFor((m) => m.some((x) => x.type === 'hello'), 'hello');
    const plain = probe(served.feedUrl);
    asking.ws.send(JSON.stringify({ type: 'subscribe', frames: true, maps: true }));
    expect(await exited(served.child)).toBe(0);
    await asking.closed;
    await plain.closed;
    expect(plain.ofType('maps')).toEqual([]);
    expect(plain.ofType('frame').length).toBeGreaterThan(100);
    const frames = new Map(asking.ofType('frame').map((f) => [f.time_s as number, f]));
    const maps = asking.ofType('maps');
    // 6 s of stream at most 10 maps a second (the feed's MAP_INTERVAL_S), silent hops send none.
    expect(maps.length).toBeGreaterThan(20);
    expect(maps.length).toBeLessThanOrEqual(61);

    // interface.md square-10cm mics (+-0.05, +-0.05): pair (0,1) spans 0.1 m, (0,2) 0.1414 m.
    const m0 = maps[0] as FeedMessage & { delay_map: { pair: number[]; first_lag_s: number; lag_step_s: number; values: number[] }[] };
    expect(m0.delay_map.map((d) => d.pair)).toEqual([[0, 1], [0, 2], [0, 3], [1, 2], [1, 3], [2, 3]]);
    const reach = (d: { first_lag_s: number }): number => Math.round(-d.first_lag_s * RATE);
    expect(reach(m0.delay_map[0]!)).toBe(Math.ceil((0.1 / 343) * RATE)); // 14 samples
    expect(reach(m0.delay_map[1]!)).toBe(Math.ceil((Math.SQRT2 * 0.1 / 343) * RATE)); // 20 samples

    let compared = 0;
    let worstLagS = 0;
    let worstAzDeg = 0;
    for (const m of maps as (FeedMessage & { time_s: number; delay_map: { first_lag_s: number; lag_step_s: number; values: number[] }[]; direction_map: { azimuth_first_deg: number; azimuth_step_deg: number; values: number[][] } })[]) {
      const f = frames.get(m.time_s);
      expect(f, `frame of the map's hop ${m.time_s}`).toBeDefined();
      if (typeof f!.azimuth_deg !== 'number' || (f!.confidence as number) < 0.5) continue;
      const tdoa = f!.tdoa_s as number[];
      m.delay_map.forEach((d, p) => {
        const peak = d.values.indexOf(Math.max(...d.values));
        worstLagS = Math.max(worstLagS, Math.abs(d.first_lag_s + peak * d.lag_step_s - tdoa[p]!));
      });
      const row = m.direction_map.values[0]!;
      const az = m.direction_map.azimuth_first_deg + row.indexOf(Math.max(...row)) * m.direction_map.azimuth_step_deg;
      worstAzDeg = Math.max(worstAzDeg, Math.abs(((az - (f!.azimuth_deg as number) + 540) % 360) - 180));
      compared++;
    }
    console.log(`maps ${maps.length}, compared with confident frames ${compared}; worst |peak lag - tdoa_s| ${(worstLagS * 1e6).toFixed(1)} us (one sample ${(1e6 / RATE).toFixed(1)} us); worst direction-map peak vs azimuth ${worstAzDeg.toFixed(1)} deg`);
    expect(compared).toBeGreaterThan(10);
    // The map holds whole-sample lags; tdoa_s is refined below a sample: they agree to within one.
    expect(worstLagS).toBeLessThanOrEqual(1 / RATE + 1e-9);
    expect(worstAzDeg).toBeLessThanOrEqual(4);
  });

  it('is drawn by the viewer: an evidence ring brightest toward the caller, and the lag plot peaking at the chosen delay', async () => {
    const served = await serve(wav, array, 1);
    const page = await chrome.context.newPage();
    try {
      await page.setViewportSize({ width: 1280, height: 900 });
      await page.goto(served.pageUrl);
      await page.waitForFunction(() => (window as unknown as { bearlineViewer: { counts: { maps: number } } }).bearlineViewer.counts.maps > 5, undefined, { timeout: 15000 });
      await page.waitForFunction(() => document.querySelectorAll('#event-list li .az').length >= 2, undefined, { timeout: 15000 });
      await page.waitForTimeout(300);
      await page.screenshot({ path: `${ARTIFACTS}viewer-scan-evidence.png` });
      // The evidence band (0.895-0.975 of the dial's radius): toward the frog and away from it. The
      // scene puts it at compass bearing 40 with the array's front at heading 30: azimuth 10.
      const ring = await page.evaluate(() => {
        const c = document.getElementById('dial') as HTMLCanvasElement;
        const dpr = window.devicePixelRatio || 1;
        const w = c.width / dpr;
        const h = c.height / dpr;
        const labelSize = Math.max(13, Math.round(Math.min(w, h) * 0.031));
        const R = Math.min(w, h) / 2 - labelSize * 2.6;
        const ctx = c.getContext('2d') as CanvasRenderingContext2D;
        const at = (az: number): number[] => {
          const a = (az * Math.PI) / 180;
          const x = Math.round((w / 2 + Math.sin(a) * R * 0.935) * dpr);
          const y = Math.round((h / 2 - Math.cos(a) * R * 0.935) * dpr);
          return [...ctx.getImageData(x, y, 1, 1).data];
        };
        return { toward: at(10), away: at(-170) };
      });
      const lum = (p: number[]): number => p[0]! + p[1]! + p[2]!;
      expect(lum(ring.toward), JSON.stringify(ring)).toBeGreaterThan(lum(ring.away) + 150);
      expect(ring.toward[0]!).toBeGreaterThanOrEqual(ring.toward[2]!); // warm white, not a track colour
      // The lag plot: drawn (pixels not background), its peak is a possible lag of pair 0-1.
      const lag = await page.evaluate(() => {
        const c = document.getElementById('lag-plot') as HTMLCanvasElement;
        const px = (c.getContext('2d') as CanvasRenderingContext2D).getImageData(0, 0, c.width, c.height).data;
        let lit = 0;
        for (let i = 0; i < px.length; i += 4) if (px[i + 3]! > 0 && px[i]! > 150) lit++;
        return { lit, peak: (window as unknown as { bearlineViewer: { lagPeakS: number } }).bearlineViewer.lagPeakS };
      });
      expect(lag.lit).toBeGreaterThan(100);
      expect(Math.abs(lag.peak)).toBeLessThanOrEqual(0.1 / 343 + 1 / RATE);
    } finally {
      await page.close();
      served.child.kill('SIGTERM');
      await exited(served.child);
    }
  });
});

/**
 * Feed benchmark: (1) latency from sendFrame to receipt by a ws client on loopback at
 * 50 frames/s (median, p99, and as a fraction of the 20 ms hop), plus the cost of one
 * sendFrame call; (2) the viewer's drawing rate in headless Chromium (requestAnimationFrame
 * callbacks per second) while 50 messages/s arrive, against the same page with no messages,
 * measured in one run. Report only; nothing here passes or fails on a time.
 *
 * Alone: `npx tsx test/bench/feed-latency.ts`; the main runner calls runFeedLatencyBench().
 */
import { pathToFileURL } from 'node:url';
import { startFeedServer } from '../../src/feed/feed-server.js';
import { launchChromium } from '../helpers/chromium.js';
import { DEFAULT_SCENE, fakeFrame, fakeGeometry, startFeedFake } from '../helpers/feed-fake.js';
import { probe } from '../helpers/ws-probe.js';

export interface FeedBenchReport {
  name: string;
  figures: Record<string, number>;
  lines: string[];
}

const RATE_HZ = 50;
const HOP_MS = 1000 / RATE_HZ;

function quantile(sorted: number[], q: number): number {
  const i = Math.min(sorted.length - 1, Math.max(0, Math.round(q * (sorted.length - 1))));
  return sorted[i];
}

async function measureLatency(frames: number): Promise<{ medianMs: number; p99Ms: number; sendUs: number; burstUs: number }> {
  const server = await startFeedServer({ port: 0, geometry: fakeGeometry() });
  const client = probe(server.feedUrl);
  await client.waitFor((m) => m.some((x) => x.type === 'hello'), 'hello');
  const sentAt = new Float64Array(frames);
  const latencies: number[] = [];
  const sendCosts: number[] = [];
  client.ws.on('message', (data) => {
    const now = performance.now();
    const msg = JSON.parse(data.toString()) as { type: string; time_s: number };
    if (msg.type === 'frame') latencies.push(now - sentAt[Math.round(msg.time_s / DEFAULT_SCENE.hopS)]);
  });
  for (let i = 0; i < frames; i++) {
    const frame = fakeFrame(DEFAULT_SCENE, i);
    const t0 = performance.now();
    sentAt[i] = t0;
    server.frame(frame);
    sendCosts.push((performance.now() - t0) * 1000);
    await new Promise((r) => setTimeout(r, HOP_MS));
  }
  await client.waitFor((m) => m.filter((x) => x.type === 'frame').length === frames, 'all frames', 10_000);
  const done = latencies.slice().sort((a, b) => a - b);
  // The same call back to back (warm caches, as when a recording is scanned faster than real time).
  const burst: number[] = [];
  const frame = fakeFrame(DEFAULT_SCENE, 0);
  for (let i = 0; i < frames; i++) {
    const t0 = performance.now();
    server.frame(frame);
    burst.push((performance.now() - t0) * 1000);
    if (i % 20 === 19) await new Promise((r) => setImmediate(r));
  }
  burst.sort((a, b) => a - b);
  client.ws.close();
  await server.close();
  sendCosts.sort((a, b) => a - b);
  return { medianMs: quantile(done, 0.5), p99Ms: quantile(done, 0.99), sendUs: quantile(sendCosts, 0.5), burstUs: quantile(burst, 0.5) };
}

async function measureDrawRate(seconds: number): Promise<{ loaded: number; idle: number; received: number }> {
  const chrome = await launchChromium();
  type Counts = { draws: number; frames: number };
  const sample = async (url: string): Promise<{ draws: number; frames: number }> => {
    const page = await chrome.context.newPage();
    await page.setViewportSize({ width: 1280, height: 800 });
    await page.goto(url);
    await page.waitForSelector('#link-state[data-state="live"]');
    await page.waitForTimeout(1000);
    const read = (): Promise<Counts> =>
      page.evaluate(() => (window as unknown as { bearlineViewer: { counts: Counts } }).bearlineViewer.counts);
    const a = await read();
    const t0 = performance.now();
    await page.waitForTimeout(seconds * 1000);
    const b = await read();
    const dt = (performance.now() - t0) / 1000;
    await page.close();
    return { draws: (b.draws - a.draws) / dt, frames: (b.frames - a.frames) / dt };
  };
  try {
    const fake = await startFeedFake({ rateHz: RATE_HZ });
    const loaded = await sample(fake.server.url);
    await fake.stop();
    const quiet = await startFeedServer({ port: 0, geometry: fakeGeometry() });
    const idle = await sample(quiet.url);
    await quiet.close();
    return { loaded: loaded.draws, idle: idle.draws, received: loaded.frames };
  } finally {
    await chrome.close();
  }
}

export async function runFeedLatencyBench(opts: { frames?: number; drawSeconds?: number } = {}): Promise<FeedBenchReport> {
  const lat = await measureLatency(opts.frames ?? 500);
  const draw = await measureDrawRate(opts.drawSeconds ?? 4);
  const figures = {
    latency_median_ms: lat.medianMs,
    latency_p99_ms: lat.p99Ms,
    latency_median_per_hop: lat.medianMs / HOP_MS,
    latency_p99_per_hop: lat.p99Ms / HOP_MS,
    send_frame_median_us: lat.sendUs,
    send_frame_back_to_back_median_us: lat.burstUs,
    send_frame_share_of_hop: lat.sendUs / 1000 / HOP_MS,
    viewer_draws_per_s_at_50_msgs: draw.loaded,
    viewer_draws_per_s_idle: draw.idle,
    viewer_draw_ratio_loaded_to_idle: draw.idle > 0 ? draw.loaded / draw.idle : 0,
    viewer_frames_received_per_s: draw.received,
  };
  const f = (x: number, d = 2): string => x.toFixed(d);
  const lines = [
    `feed latency on loopback at ${RATE_HZ} frames/s: median ${f(lat.medianMs, 3)} ms, p99 ${f(lat.p99Ms, 3)} ms ` +
      `(${f(figures.latency_median_per_hop, 3)} and ${f(figures.latency_p99_per_hop, 3)} of a ${HOP_MS} ms hop); sendFrame median ${f(lat.sendUs, 1)} us paced ` +
      `(${f(figures.send_frame_share_of_hop * 100, 2)} % of a hop), ${f(lat.burstUs, 1)} us back to back`,
    `viewer in headless Chromium: ${f(draw.loaded, 1)} draws/s while receiving ${f(draw.received, 1)} frames/s, ` +
      `${f(draw.idle, 1)} draws/s idle (ratio ${f(figures.viewer_draw_ratio_loaded_to_idle, 3)})`,
  ];
  return { name: 'feed-latency', figures, lines };
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const report = await runFeedLatencyBench();
  for (const line of report.lines) process.stdout.write(`${line}\n`);
}

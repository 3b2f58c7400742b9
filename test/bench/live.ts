/**
 * Live benchmark, both through the built command `bearline listen --stdin` (npm run bench builds it):
 * (1) latency from the end of a hop's audio to its frame message on the feed: the bench writes
 *     raw PCM to listen's stdin hop by hop at real-time pace and notes when each hop's last
 *     sample left; a ws client on loopback notes when the frame of that hop arrives. Reported
 *     as median, p99 and max, and as a share of the hop.
 * (2) soak: one hour of audio (a sox pipe, made on the fly, nothing on disk) through listen
 *     --stdin at full speed, frames and events to stdout; listen's resident memory at start,
 *     end and peak (read from /proc), and how many times faster than real time it ran.
 * Report only; nothing here passes or fails on a time.
 *
 * Alone: `npx tsx test/bench/live.ts [latencySeconds] [soakSeconds]`; the main runner calls runLiveBench().
 */
import { execFileSync, spawn } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { pathToFileURL } from 'node:url';
import { BIN } from '../helpers/cli.js';
import { probe } from '../helpers/ws-probe.js';

export interface LiveBenchReport {
  name: string;
  figures: Record<string, number>;
  lines: string[];
}

const RATE = 48_000;
const CHANNELS = 2;
const FRAME = 1024; // the default analysis frame at 48 kHz
const HOP = 512; // its default hop (frame / 2)
const HOP_BYTES = HOP * CHANNELS * 2;

/** Pink-noise calls, half a second on and off, reaching channel 0 ten samples after channel 1 (about +21 deg for 0.2 m): sox. */
function soxArgs(seconds: number): string[] {
  return ['-R', '-n', '-r', String(RATE), '-c', String(CHANNELS), '-b', '16', '-e', 'signed-integer', '-L', '-t', 'raw', '-',
    'synth', String(seconds), 'pinknoise', 'synth', String(seconds), 'square', 'amod', '1', 'channels', '2', 'delay', '10s', '0', 'gain', '-6'];
}

function rssKiB(pid: number): number {
  const m = /VmRSS:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
  return m ? Number(m[1]) : NaN;
}

function quantile(sorted: number[], q: number): number {
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.round(q * (sorted.length - 1))))]!;
}

interface Latency {
  medianMs: number;
  p99Ms: number;
  maxMs: number;
  frames: number;
}

function summarise(ms: number[]): Latency {
  const s = [...ms].sort((a, b) => a - b);
  return { medianMs: quantile(s, 0.5), p99Ms: quantile(s, 0.99), maxMs: s[s.length - 1]!, frames: s.length };
}

/** Latencies over the whole run, and after the first WARM_S seconds (the code is compiled by then). */
const WARM_S = 2;

async function measureLatency(seconds: number): Promise<{ all: Latency; warm: Latency }> {
  const pcm = execFileSync('sox', soxArgs(seconds), { maxBuffer: 1 << 30 });
  const child = spawn(process.execPath, [BIN, 'listen', '--stdin', '--rate', String(RATE), '--channels', String(CHANNELS), '--spacing', '0.2', '--serve', '--feed-port', '0', '--quiet', '--status-every', '0'], {
    stdio: ['pipe', 'ignore', 'pipe'],
  });
  let err = '';
  child.stderr.setEncoding('utf8').on('data', (d: string) => (err += d));
  const end = Date.now() + 10_000;
  while (!/\(feed (ws:\/\/[^\s)]+)\)/.test(err)) {
    if (Date.now() > end) throw new Error(`listen printed no feed URL: ${err}`);
    await new Promise((r) => setTimeout(r, 20));
  }
  const client = probe(/\(feed (ws:\/\/[^\s)]+)\)/.exec(err)![1]!);
  await client.waitFor((m) => m.some((x) => x.type === 'hello'), 'hello');
  const hops = Math.floor(pcm.length / HOP_BYTES);
  const sentAt = new Float64Array(hops).fill(NaN);
  const latencies: number[] = [];
  const warm: number[] = [];
  client.ws.on('message', (data) => {
    const now = performance.now();
    const msg = JSON.parse(data.toString()) as { type: string; time_s: number };
    if (msg.type !== 'frame') return;
    // time_s is the frame's centre; its audio ends frame / 2 later, at a hop boundary.
    const endSample = Math.round((msg.time_s * RATE + FRAME / 2) / HOP) * HOP;
    const chunk = endSample / HOP - 1;
    if (chunk < 0 || chunk >= hops || !Number.isFinite(sentAt[chunk]!)) return;
    latencies.push(now - sentAt[chunk]!);
    if (msg.time_s > WARM_S) warm.push(now - sentAt[chunk]!);
  });
  // Real-time pace against a fixed schedule (no drift), one hop per write.
  const t0 = performance.now();
  const hopMs = (HOP / RATE) * 1000;
  for (let k = 0; k < hops; k++) {
    const due = t0 + (k + 1) * hopMs;
    let wait = due - performance.now();
    if (wait > 1.5) await new Promise((r) => setTimeout(r, wait - 1));
    while ((wait = due - performance.now()) > 0) await new Promise((r) => setImmediate(r));
    child.stdin.write(pcm.subarray(k * HOP_BYTES, (k + 1) * HOP_BYTES));
    sentAt[k] = performance.now();
  }
  child.stdin.end();
  await new Promise((r) => child.once('exit', r));
  client.close();
  return { all: summarise(latencies), warm: summarise(warm) };
}

async function soak(seconds: number): Promise<{ wallS: number; rssStartMiB: number; rssEndMiB: number; rssPeakMiB: number; frames: number; events: number }> {
  const gen = spawn('sox', soxArgs(seconds), { stdio: ['ignore', 'pipe', 'inherit'] });
  const t0 = performance.now();
  const child = spawn(process.execPath, [BIN, 'listen', '--stdin', '--rate', String(RATE), '--channels', String(CHANNELS), '--spacing', '0.2', '--frames', '--status-every', '0'], {
    stdio: ['pipe', 'pipe', 'ignore'],
  });
  gen.stdout.pipe(child.stdin);
  let frames = 0;
  let events = 0;
  let tail = '';
  child.stdout.setEncoding('utf8').on('data', (d: string) => {
    const text = tail + d;
    const cut = text.lastIndexOf('\n');
    tail = text.slice(cut + 1);
    for (const line of text.slice(0, cut).split('\n')) {
      if (line.startsWith('{"time_s"')) frames++;
      else if (line.startsWith('{"start_s"')) events++;
    }
  });
  const samples: number[] = [];
  const timer = setInterval(() => {
    const kib = rssKiB(child.pid!);
    if (Number.isFinite(kib)) samples.push(kib / 1024);
  }, 500);
  const code = await new Promise<number | null>((r) => child.once('exit', r));
  clearInterval(timer);
  if (code !== 0) throw new Error(`listen --stdin ended with ${code}`);
  const wallS = (performance.now() - t0) / 1000;
  // Start: the first reading after two seconds of streaming (the code and buffers are in by then).
  const start = samples[Math.min(samples.length - 1, 4)]!;
  return { wallS, rssStartMiB: start, rssEndMiB: samples[samples.length - 1]!, rssPeakMiB: Math.max(...samples), frames, events };
}

export async function runLiveBench(opts: { latencySeconds?: number; soakSeconds?: number } = {}): Promise<LiveBenchReport> {
  const latS = opts.latencySeconds ?? 20;
  const soakS = opts.soakSeconds ?? 3600;
  const { all: lat, warm } = await measureLatency(latS);
  const s = await soak(soakS);
  const hopMs = (HOP / RATE) * 1000;
  const figures = {
    latency_median_ms: lat.medianMs,
    latency_p99_ms: lat.p99Ms,
    latency_max_ms: lat.maxMs,
    latency_median_per_hop: lat.medianMs / hopMs,
    latency_frames: lat.frames,
    latency_warm_median_ms: warm.medianMs,
    latency_warm_p99_ms: warm.p99Ms,
    latency_warm_max_ms: warm.maxMs,
    soak_audio_s: soakS,
    soak_wall_s: s.wallS,
    soak_real_time_factor: soakS / s.wallS,
    soak_rss_start_mib: s.rssStartMiB,
    soak_rss_end_mib: s.rssEndMiB,
    soak_rss_peak_mib: s.rssPeakMiB,
    soak_rss_end_to_start: s.rssEndMiB / s.rssStartMiB,
    soak_frames: s.frames,
    soak_events: s.events,
  };
  const f = (x: number, d = 2): string => x.toFixed(d);
  const lines = [
    `listen --stdin --serve, real-time pace, ${latS} s: end of a hop's audio to its frame on the feed: median ${f(lat.medianMs)} ms, ` +
      `p99 ${f(lat.p99Ms)} ms, max ${f(lat.maxMs)} ms over ${lat.frames} frames (hop ${f(hopMs, 1)} ms; median ${f(figures.latency_median_per_hop, 3)} of a hop); ` +
      `after the first ${WARM_S} s: median ${f(warm.medianMs)} ms, p99 ${f(warm.p99Ms)} ms, max ${f(warm.maxMs)} ms`,
    `listen --stdin soak, ${soakS} s of audio at full speed: ${f(s.wallS, 1)} s wall (${f(figures.soak_real_time_factor, 1)}x real time), ` +
      `${s.frames} frames and ${s.events} events; RSS ${f(s.rssStartMiB, 1)} MiB at start, ${f(s.rssEndMiB, 1)} MiB at end ` +
      `(ratio ${f(figures.soak_rss_end_to_start, 3)}), peak ${f(s.rssPeakMiB, 1)} MiB`,
  ];
  return { name: 'live', figures, lines };
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const [lat, soakS] = process.argv.slice(2).map(Number);
  const report = await runLiveBench({ latencySeconds: lat || undefined, soakSeconds: soakS || undefined });
  for (const line of report.lines) process.stdout.write(`${line}\n`);
}

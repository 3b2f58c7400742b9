/**
 * The station view of speed (issue 14, item 4):
 * (1) per array preset, the CPU share of one core that the per-hop path (analysis, tracking,
 *     records; test/bench/stages.ts) needs at real time, with the defaults and with the
 *     `station-low-cpu` profile's analysis and tracker settings, measured in this run;
 * (2) live stations: the built `bearline listen --stdin` with a 4-mic square, its record log
 *     on (--log-dir, --quiet), fed raw PCM at real-time pace (20 ms blocks on a fixed
 *     schedule), three at once on the same writes (liveStationShares: the same seconds of the
 *     machine's load for each); the CPU time of each listen process (its threads' run time in
 *     /proc/PID/task/TID/schedstat, nanoseconds) over the
 *     wall time after the first WARM_S seconds (start-up and JIT warm-up left out: V8 compiles
 *     the hot paths on its background threads once they have run often enough, which the
 *     low-CPU profile, with half the hops and most quiet ones not searched, reaches later: its
 *     V8 threads still took about 0.3 % of a core between 30 and 45 s and about nothing after
 *     (schedstat per thread); a station runs all night, so the share that counts is the one
 *     after), with the
 *     defaults (stdin analysed every 0.1 s), with --profile station-low-cpu (analysed once a
 *     second; stdin, a Unix socket here, read 5 times a second: three quarters of half its send
 *     buffer hold 0.208 s) and with the defaults reading every write as it arrives (--read-every 0).
 * Report only: nothing here passes or fails on a time. The machine may be shared: the share of
 * a busy machine is higher than that of a quiet one (CPU time grows when caches are shared).
 *
 * Alone: `npx tsx test/bench/station-cpu.ts [liveSeconds] [warmSeconds]` (builds nothing: run `npm run build` first).
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { PROFILE_SECTIONS } from '../../src/cli/analysis-flags.js';
import type { AnalysisOptions } from '../../src/analysis/analysis-options.js';
import { loadProfile, profileValues } from '../../src/options/profile.js';
import type { TrackerOptions } from '../../src/track/options.js';
import { configsDir } from '../../src/util/configs.js';
import { BIN } from '../helpers/cli.js';
import { coreCases, RATE } from './core.js';
import { benchStages } from './stages.js';

const LOW_CPU = 'station-low-cpu';

export function lowCpuSettings(): { analysis: AnalysisOptions; tracker: Partial<TrackerOptions> } {
  const profile = loadProfile(LOW_CPU, `${configsDir()}profiles/`, PROFILE_SECTIONS);
  return { analysis: profileValues<AnalysisOptions>(profile, 'analysis'), tracker: profileValues<TrackerOptions>(profile, 'tracker') };
}

export interface PresetShare {
  name: string;
  defaultsPct: number;
  lowCpuPct: number;
}

/** Per preset: per-hop cost x hops per second, as a share of one core, with the defaults and the profile. */
export function presetShares(seconds = 5): PresetShare[] {
  const low = lowCpuSettings();
  return coreCases().map(([name, g]) => {
    const d = benchStages(name, g, {}, {}, seconds, 3);
    const l = benchStages(name, g, low.analysis, low.tracker, seconds, 3);
    const hopD = d.hopSamples;
    const hopL = l.hopSamples;
    return { name, defaultsPct: (100 * d.total * 1e-6 * RATE) / hopD, lowCpuPct: (100 * l.total * 1e-6 * RATE) / hopL };
  });
}

/** Seconds of each live run before its CPU is counted (start-up, the JIT's warm-up; see above). */
const WARM_S = 60;
const CHANNELS = 4;
const BLOCK = 960; // 20 ms at 48 kHz

/** Four channels of noise calls (0.4 s on, 0.6 s off) from one direction, with mic self-noise, s16le interleaved. */
function pcm(seconds: number): Buffer {
  const frames = seconds * RATE;
  const out = Buffer.alloc(frames * CHANNELS * 2);
  let s = 7;
  const rand = () => ((s = (s * 1664525 + 1013904223) >>> 0) / 2 ** 32) - 0.5;
  const src = new Float32Array(frames + 16).map(() => rand());
  for (let i = 0; i < frames; i++) {
    const on = (i / RATE) % 1 < 0.4 ? 0.5 : 0;
    for (let c = 0; c < CHANNELS; c++) {
      const v = on * src[i + 16 - 2 * c]! + 0.01 * rand();
      out.writeInt16LE(Math.max(-32768, Math.min(32767, Math.round(v * 20000))), 2 * (i * CHANNELS + c));
    }
  }
  return out;
}

/**
 * CPU seconds the process has run so far: the sum over its threads of the scheduler's run time
 * (/proc/PID/task/TID/schedstat, nanoseconds, exact), else utime + stime from /proc/PID/stat
 * (10 ms clock ticks, charged to whoever runs when a tick lands: coarse for a process that
 * runs 1 % of the time in short bursts).
 */
function cpuSeconds(pid: number): number {
  try {
    let ns = 0;
    for (const tid of readdirSync(`/proc/${pid}/task`)) ns += Number(readFileSync(`/proc/${pid}/task/${tid}/schedstat`, 'utf8').split(' ')[0]);
    if (Number.isFinite(ns) && ns > 0) return ns / 1e9;
  } catch {
    // no schedstat: the ticks below
  }
  const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
  const f = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
  return (Number(f[11]) + Number(f[12])) / HZ; // utime, stime (fields 14 and 15)
}

/** Clock ticks per second of /proc/PID/stat (USER_HZ, 100 on Linux). */
const HZ = 100;

export interface LiveShare {
  profile: string;
  cpuPct: number;
  seconds: number;
}

export interface LiveCase {
  profile: string | null;
  /** More listen options. */
  args?: string[];
  nodeFlags?: string[];
}

export async function liveStationShare(profile: string | null, seconds = 30, nodeFlags: string[] = [], listenArgs: string[] = [], warmS = WARM_S): Promise<LiveShare> {
  return (await liveStationShares([{ profile, args: listenArgs, nodeFlags }], seconds, warmS))[0]!;
}

/**
 * Several live stations side by side, fed the same writes on the same schedule, so that each
 * one's CPU is measured over the same seconds of a shared machine's load (their ratio is then
 * fair; one after the other, the load moved between runs by more than the differences).
 */
export async function liveStationShares(cases: LiveCase[], seconds = 30, warmS = WARM_S): Promise<LiveShare[]> {
  const data = pcm(warmS + seconds);
  const array = fileURLToPath(new URL('../../configs/arrays/square-10cm.json', import.meta.url));
  const runs = cases.map((c) => {
    const dir = mkdtempSync(join(tmpdir(), 'bearline-station-cpu-'));
    const args = [...(c.nodeFlags ?? []), BIN, 'listen', '--stdin', '--rate', String(RATE), '--channels', String(CHANNELS), '--array', array, '--log-dir', dir, '--quiet', '--status-every', '0'];
    if (c.profile) args.push('--profile', c.profile);
    args.push(...(c.args ?? []));
    const child = spawn(process.execPath, args, { stdio: ['pipe', 'ignore', 'pipe'] });
    let err = '';
    child.stderr.setEncoding('utf8').on('data', (d: string) => (err += d));
    const exited = new Promise<number | null>((r) => child.once('exit', r));
    return { c, dir, child, exited, err: () => err, mark: null as { cpu: number; ms: number } | null, last: { cpu: 0, ms: 0 } };
  });
  try {
    const bytesPerBlock = BLOCK * CHANNELS * 2;
    const blocks = Math.floor(data.length / bytesPerBlock);
    const blockMs = (BLOCK / RATE) * 1000;
    const t0 = performance.now();
    for (let k = 0; k < blocks; k++) {
      const due = t0 + k * blockMs;
      const wait = due - performance.now();
      if (wait > 0) await new Promise((r) => setTimeout(r, wait));
      for (const r of runs) r.child.stdin.write(data.subarray(k * bytesPerBlock, (k + 1) * bytesPerBlock));
      for (const r of runs) {
        if (r.mark === null && k * blockMs >= warmS * 1000) r.mark = { cpu: cpuSeconds(r.child.pid!), ms: performance.now() };
        r.last = { cpu: cpuSeconds(r.child.pid!), ms: performance.now() };
      }
    }
    const out: LiveShare[] = [];
    for (const r of runs) {
      if (r.mark === null) throw new Error(`run longer than ${warmS} s`);
      r.child.stdin.end();
      const code = await r.exited;
      if (code !== 0) throw new Error(`listen ended with ${code}: ${r.err()}`);
      out.push({ profile: r.c.profile ?? 'defaults', cpuPct: (100 * (r.last.cpu - r.mark.cpu)) / ((r.last.ms - r.mark.ms) / 1000), seconds: (r.last.ms - r.mark.ms) / 1000 });
    }
    return out;
  } finally {
    for (const r of runs) {
      if (r.child.exitCode === null) r.child.kill();
      rmSync(r.dir, { recursive: true, force: true });
    }
  }
}

export async function runStationCpuBench(liveSeconds = 30, warmS = WARM_S): Promise<string[]> {
  const lines = [`CPU share of one core at real time, 48 kHz, per array preset (per-hop path: analysis, tracking, records; every hop searched, as in a calling chorus), defaults and --profile ${LOW_CPU}:`];
  lines.push(`  ${'case'.padEnd(25)} ${'defaults'.padStart(9)} ${LOW_CPU.padStart(16)}  low/defaults`);
  for (const r of presetShares()) {
    lines.push(`  ${r.name.padEnd(25)} ${`${r.defaultsPct.toFixed(2)}%`.padStart(9)} ${`${r.lowCpuPct.toFixed(2)}%`.padStart(16)}  ${(r.lowCpuPct / r.defaultsPct).toFixed(2).padStart(12)}`);
  }
  const [d, l, each] = (await liveStationShares([{ profile: null }, { profile: LOW_CPU }, { profile: null, args: ['--read-every', '0'] }], liveSeconds, warmS)) as [LiveShare, LiveShare, LiveShare];
  lines.push(
    `live stations side by side (listen --stdin, 4-mic square 10 cm, record log on, the same 20 ms writes at real-time pace, CPU over the ${d.seconds.toFixed(0)} s after the first ${warmS} s): ` +
      `defaults ${d.cpuPct.toFixed(1)}% of one core, ${LOW_CPU} ${l.cpuPct.toFixed(1)}% (ratio ${(l.cpuPct / d.cpuPct).toFixed(2)}); ` +
      `defaults reading every write (--read-every 0) ${each.cpuPct.toFixed(1)}%`,
  );
  lines.push('  targets (issue 14): defaults at most 3% of one core, station-low-cpu at most half of the defaults');
  return lines;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const s = Number(process.argv[2]) || 30;
  const warm = process.argv[3] === undefined ? WARM_S : Number(process.argv[3]);
  for (const line of await runStationCpuBench(s, warm)) console.log(line);
}

/**
 * Core benchmark (issue: streaming pair analysis; arrays): real-time factor on one core, CPU time
 * per hop against the FFT floor measured in the same run with the same FFT, the same pairs
 * through a vectorised numpy GCC-PHAT, and peak RSS for a 10-minute stream against a 1-minute one.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { RealFft } from '../../src/dsp/fft.js';
import { Framer } from '../../src/dsp/framer.js';
import { pairGeometry, type ArrayGeometry } from '../../src/geometry/array-geometry.js';
import { loadGeometryFile } from '../../src/geometry/geometry-file.js';
import { createAnalysis } from '../../src/analysis/analysis.js';

export const RATE = 48000;
const here = fileURLToPath(new URL('.', import.meta.url));

export function noiseFrames(channels: number, samples: number, seed = 1): Float32Array[] {
  let s = seed;
  const rand = () => ((s = (s * 1664525 + 1013904223) >>> 0) / 2 ** 32) - 0.5;
  const common = new Float32Array(samples + 64).map(() => rand());
  // channel c: the common noise delayed by c samples plus independent noise (SNR about 10 dB)
  return Array.from({ length: channels }, (_, c) => {
    const x = new Float32Array(samples);
    for (let i = 0; i < samples; i++) x[i] = 0.5 * common[i + 64 - c]! + 0.16 * rand();
    return x;
  });
}

/**
 * Milliseconds per call of fn, in CPU time of this process (process.cpuUsage: user + system):
 * on a shared machine, time spent descheduled while other work runs is not counted (wall time
 * there grew by 2x from one minute to the next; CPU time stayed within a few per cent).
 */
function timeIt(fn: () => void, minMs = 400): number {
  fn();
  let reps = 1;
  for (;;) {
    const t = process.cpuUsage();
    for (let i = 0; i < reps; i++) fn();
    const c = process.cpuUsage(t);
    const dt = (c.user + c.system) / 1000;
    if (dt >= minMs) return dt / reps;
    reps *= 2;
  }
}

/**
 * Timing rounds of the pipeline and the floor (the best of each counts); the numpy peer runs in
 * rounds 0, 2, 4 and 6. (Five rounds until turn 2's session 11: in one run of six that day every
 * round of the 4-mic square was disturbed, 43.7 us a hop against 37.9-39.2 in the other five.)
 */
const ROUNDS = 7;

export interface CoreFigures {
  name: string;
  channels: number;
  pairs: number;
  usPerHop: number;
  floorUsPerHop: number;
  ratioToFloor: number;
  realTime: number;
  numpyUsPerHop: number | null;
  ratioToNumpy: number | null;
}

export function benchCase(name: string, geometry: ArrayGeometry, seconds = 10, numpy = true): CoreFigures {
  const setup = createAnalysis(geometry, RATE, 343, {});
  const { analyzer, model } = setup;
  const n = analyzer.frame;
  const hop = analyzer.hop;
  const C = geometry.mics.length;
  const P = model.pairs.length;
  const signal = noiseFrames(C, seconds * RATE);
  const hops = Math.floor((signal[0]!.length - n) / hop) + 1;
  const frames = Array.from({ length: C }, () => new Float64Array(n));
  // The frames are built as a station builds them: the project's Framer (src/dsp/framer.ts,
  // block copies), into the analyzer's own buffers when it has them. (Until turn 2's session 10
  // the bench copied sample by sample, about 6 us a hop for 4 channels against the Framer's 1.)
  const input = analyzer.inputFrames() ?? frames;
  const runPipeline = () => {
    let seen = 0;
    new Framer(C, n, hop, input).push(signal, signal[0]!.length, (f) => {
      analyzer.process(f);
      seen++;
    });
    if (seen !== hops) throw new Error(`bench: ${seen} frames framed, ${hops} expected`);
  };
  // The FFT floor: the same frames, copied into the FFT's input (where the pipeline windows
  // them), C forward and P inverse transforms per hop, on the FFT's fastest path.
  const fft = new RealFft(n);
  const fftIn = fft.createInput();
  const spec = fft.createSpectrum();
  const re = new Float64Array(n / 2 + 1);
  const im = new Float64Array(n / 2 + 1);
  const out = new Float64Array(n);
  const floorHop = (f: readonly Float64Array[]) => {
    for (let c = 0; c < C; c++) {
      const src = f[c]!;
      for (let i = 0; i < n; i++) fftIn[i] = src[i]!;
      fft.forwardInterleaved(fftIn, spec);
    }
    for (let p = 0; p < P; p++) fft.inverse(re, im, out);
  };
  const runFloor = () => {
    new Framer(C, n, hop, frames).push(signal, signal[0]!.length, floorHop);
  };
  // The numpy peer runs over the same frames in its own process (its best of 3 runs there).
  const dir = numpy ? mkdtempSync(join(tmpdir(), 'bearline-bench-')) : null;
  const raw = dir === null ? '' : join(dir, 'x.f32');
  if (dir !== null) {
    const inter = new Float32Array(signal[0]!.length * C);
    for (let i = 0; i < signal[0]!.length; i++) for (let c = 0; c < C; c++) inter[i * C + c] = signal[c]![i]!;
    writeFileSync(raw, Buffer.from(inter.buffer));
  }
  const maxLag = Math.max(...model.maxLag);
  const numpyRuns: number[] = [];
  let numpyFailed = false;
  const runNumpy = () => {
    const r = spawnSync('python3', [join(here, 'gcc_phat_numpy.py'), raw, String(C), String(n), String(hop), String(maxLag)], { encoding: 'utf8' });
    if (r.status === 0) numpyRuns.push(Number(r.stdout.trim().split(' ')[0]) * 1e6);
    else {
      process.stderr.write(`numpy reference failed: ${r.stderr}\n`);
      numpyFailed = true;
    }
  };
  // Alternate the pipeline and the floor and keep the best of ROUNDS each, and run the numpy peer
  // in a process of its own in every other round, keeping its best: on a shared machine the
  // minimum is the figure least disturbed by other work, and both sides are measured over the
  // same minutes. (One numpy process was one draw of the machine's state: its figure for the
  // 4-mic square moved from 98 to 155 us a hop between five processes run one after the other
  // at a load of 0.5.)
  let pipeMs = Infinity;
  let floorMs = Infinity;
  try {
    for (let round = 0; round < ROUNDS; round++) {
      pipeMs = Math.min(pipeMs, timeIt(runPipeline, 200));
      floorMs = Math.min(floorMs, timeIt(runFloor, 200));
      if (dir !== null && !numpyFailed && round % 2 === 0) runNumpy();
    }
  } finally {
    if (dir !== null) rmSync(dir, { recursive: true, force: true });
  }
  const usPerHop = (pipeMs * 1000) / hops;
  const floorUsPerHop = (floorMs * 1000) / hops;
  const numpyUsPerHop = numpyRuns.length > 0 && !numpyFailed ? Math.min(...numpyRuns) : null;
  return {
    name,
    channels: C,
    pairs: P,
    usPerHop,
    floorUsPerHop,
    ratioToFloor: usPerHop / floorUsPerHop,
    realTime: hop / RATE / (usPerHop * 1e-6),
    numpyUsPerHop,
    ratioToNumpy: numpyUsPerHop === null ? null : numpyUsPerHop / usPerHop,
  };
}

/** Peak RSS of `bearline scan` on a 1-minute and a 10-minute stereo file (memory flat in length). */
export function benchMemory(): { oneMinMb: number; tenMinMb: number } {
  const dir = mkdtempSync(join(tmpdir(), 'bearline-bench-'));
  const bin = fileURLToPath(new URL('../../dist/cli/main.js', import.meta.url));
  try {
    const rss = (minutes: number) => {
      const wav = join(dir, `${minutes}min.wav`);
      execFileSync('sox', ['-R', '-n', '-r', String(RATE), '-c', '2', '-b', '16', wav, 'synth', String(minutes * 60), 'pinknoise', 'gain', '-10']);
      const r = spawnSync('/usr/bin/time', ['-f', '%M', process.execPath, bin, 'scan', wav, '--spacing', '0.2', '--out', join(dir, 'out.jsonl')], { encoding: 'utf8' });
      if (r.status !== 0) throw new Error(`scan failed: ${r.stderr}`);
      return Number(r.stderr.trim().split('\n').pop()) / 1024;
    };
    return { oneMinMb: rss(1), tenMinMb: rss(10) };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

export function coreCases(): [string, ArrayGeometry][] {
  const preset = (p: string) => loadGeometryFile(fileURLToPath(new URL(`../../configs/arrays/${p}.json`, import.meta.url)));
  return [
    ['stereo pair 0.2 m', pairGeometry(0.2)],
    ['4-mic square 10 cm', preset('square-10cm')],
    ['4-mic tetrahedron 10 cm', preset('tetrahedron-10cm')],
    ['6-mic circle r 5 cm', preset('circle6-r5cm')],
    ['8-mic circle r 5 cm', preset('circle8-r5cm')],
  ];
}

export const KERNELS_JS_TITLE = 'PFFFT, per-bin kernels in JavaScript (BEARLINE_KERNELS=js)';
export const FALLBACK_TITLE = 'fft.js and JavaScript kernels (the fallback, BEARLINE_FFT=fftjs)';

export function printCore(rows: CoreFigures[], fft = 'PFFFT (WebAssembly SIMD), per-bin kernels in WebAssembly SIMD'): void {
  console.log(`core analysis at 48 kHz, frame 1024, hop 512, one core, FFT ${fft}:`);
  console.log('  case                      ch pairs  us/hop  floor us  x floor  x real time  numpy us  numpy/bearline');
  for (const r of rows) {
    console.log(
      `  ${r.name.padEnd(25)} ${String(r.channels).padStart(2)} ${String(r.pairs).padStart(5)} ${r.usPerHop.toFixed(1).padStart(7)} ${r.floorUsPerHop.toFixed(1).padStart(9)} ${r.ratioToFloor.toFixed(2).padStart(8)} ${r.realTime.toFixed(0).padStart(12)} ${(r.numpyUsPerHop?.toFixed(1) ?? 'n/a').padStart(9)} ${(r.ratioToNumpy?.toFixed(2) ?? 'n/a').padStart(15)}`,
    );
  }
}

/**
 * The same cases on the pure-JavaScript fallback (BEARLINE_FFT=fftjs: fft.js and the JavaScript
 * kernels), or with `env` given another path (BEARLINE_KERNELS=js: PFFFT with the JavaScript
 * kernels), in a child process (both are chosen when the program loads), against the numpy
 * figures of this run's rows.
 */
export function fallbackRows(pffftRows: readonly CoreFigures[], env: Record<string, string> = { BEARLINE_FFT: 'fftjs' }): CoreFigures[] {
  const r = spawnSync(process.execPath, ['--import', 'tsx', fileURLToPath(import.meta.url), '--fallback-json'], {
    encoding: 'utf8',
    env: { ...process.env, ...env },
    maxBuffer: 1 << 20,
  });
  if (r.status !== 0) throw new Error(`fallback bench (${JSON.stringify(env)}) failed: ${r.stderr}`);
  const rows = JSON.parse(r.stdout) as CoreFigures[];
  return rows.map((row, i) => {
    const np = pffftRows[i]?.numpyUsPerHop ?? null;
    return { ...row, numpyUsPerHop: np, ratioToNumpy: np === null ? null : np / row.usPerHop };
  });
}

export const CORE_TARGETS =
  '  targets (issue 14): pair within 1.5x of the floor, 2x numpy; 4-mic square and tetrahedron 2x numpy, within 1.6x of the floor, 150x real time; 8-mic circle 3x numpy';

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  if (process.argv.includes('--fallback-json')) {
    process.stdout.write(JSON.stringify(coreCases().map(([n, g]) => benchCase(n, g, 10, false))));
  } else {
    const rows = coreCases().map(([n, g]) => benchCase(n, g));
    printCore(rows);
    console.log(CORE_TARGETS);
    printCore(fallbackRows(rows, { BEARLINE_KERNELS: 'js' }), KERNELS_JS_TITLE);
    printCore(fallbackRows(rows), FALLBACK_TITLE);
    const m = benchMemory();
    console.log(`peak RSS of scan: 1-minute stereo ${m.oneMinMb.toFixed(0)} MB, 10-minute stereo ${m.tenMinMb.toFixed(0)} MB`);
  }
}

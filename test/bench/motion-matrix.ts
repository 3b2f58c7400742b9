/**
 * The motion matrix (issue 13, item 7): the tracker on a seeded, generated set of moving and
 * crowded scenes, scored by the multi-target tracking measures of src/accuracy/track-scores.ts
 * (track purity, completeness, id switches: common practice in multi-target tracking
 * evaluation, no single source). Scenes are rendered with `bearline simulate` and scanned with
 * `bearline scan` (the built command, as a user would), renders cached in
 * os.tmpdir()/bearline-motion-cache.
 *
 * Scores keep a track's correspondence where two sources lie within the tolerance (CLEAR MOT's
 * rule, see track-scores.ts); the strict scores (such events left out, the rule of the figures
 * before it) are printed too.
 *
 * Families:
 * - pass:   one caller on a straight line past the array (peak angular rate 10-80 deg/s at the
 *           closest point, so it speeds up and slows down), calls below or above the array's
 *           spatial-aliasing limit, on every array preset shape;
 * - cross:  two callers whose bearings cross;
 * - chorus: two static choruses calling in bouts and a caller passing across one of them,
 *           scanned with the scene's speed of sound and with it 1 % and 2 % off;
 * - bats (only with --bats, which runs these alone): bats passing at 96, 192 or 384 kHz with
 *           frequency-modulated calls of 2-10 ms, one or two at a time, scanned with
 *           `--profile bats`. Calls shorter than the truth's 10 ms step are in the truth (and
 *           so scored) only where a step falls inside them.
 *
 *   npx tsx test/bench/motion-matrix.ts [--quick] [--bats] [--seed N] [--rate HZ] [--json FILE] [--set key=value ...]
 * (--seed draws another matrix of the same kinds: a held-out check that a default was not
 * fitted to the 1313 draw; --rate renders the same scenes at another sample rate, e.g. 16000 as
 * many small USB arrays record)
 *   npm run bench motion
 *
 * Caution: the cached WAV files are ordinary recordings; if you play them through speakers or
 * earphones, start at a low volume.
 */
import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, renameSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { scoreTracks, type SourceCompleteness, type TrackScores } from '../../src/accuracy/track-scores.js';
import { indexTruth, parseTruth, TRUTH_STEP_S } from '../../src/accuracy/truth.js';
import type { EventRecord } from '../../src/records/record-types.js';
import { makeRng, type Rng } from '../../src/sim/rng.js';
import { MAX_SIGNAL_FRACTION } from '../../src/sim/scene.js';

const BIN = fileURLToPath(new URL('../../dist/cli/main.js', import.meta.url));
const DEG = Math.PI / 180;
const ARRAY_Z = 1.5;

type Family = 'pass' | 'cross' | 'chorus' | 'bats';
type CallKind = 'broadband' | 'low-harmonic' | 'high-sweep' | 'high-band';

export interface Cell {
  id: string;
  family: Family;
  condition: string;
  scene: Record<string, unknown>;
  /** Speed of sound the scan assumes, as a ratio of the scene's. */
  cRatio: number;
  /** Scan options the cell is scanned with besides the speed of sound and --set (the bats' profile). */
  args?: readonly string[];
}

/** Calls of each kind; "high" kinds lie above the spatial-aliasing limit of every preset but the 5 cm circle. */
function signalOf(kind: CallKind, rng: Rng): Record<string, unknown> {
  switch (kind) {
    case 'broadband':
      return { type: 'noise', low_hz: 500, high_hz: 8000 };
    case 'low-harmonic':
      return { type: 'tone', f0_hz: Math.round(300 + 300 * rng.uniform()), harmonics: [1, 0.5, 0.3] };
    case 'high-sweep': {
      const hi = Math.round(2800 + 1200 * rng.uniform());
      return { type: 'sweep', start_hz: hi, end_hz: Math.round(hi * 0.7), shape: 'exponential', harmonics: [1, 0.3] };
    }
    case 'high-band':
      return { type: 'noise', low_hz: 3500, high_hz: 6000 };
  }
}

const at = (azDeg: number, r: number, z: number): number[] => [r * Math.sin(azDeg * DEG), r * Math.cos(azDeg * DEG), z];

/**
 * A straight pass: closest point at bearing `closestDeg`, distance d (horizontal), height h over
 * the array, peak angular rate `rateDegS` (speed = rate x d), spanning +-`spanDeg` of bearing
 * around the closest point or `maxS` seconds, whichever is shorter. Returns the path and its duration.
 */
function pass(closestDeg: number, d: number, h: number, rateDegS: number, spanDeg: number, maxS: number, t0: number, dir: 1 | -1): { path: unknown[]; durationS: number } {
  const v = rateDegS * DEG * d;
  const half = Math.min(d * Math.tan(spanDeg * DEG), (v * maxS) / 2);
  const c = at(closestDeg, d, ARRAY_Z + h);
  // The path runs at right angles to the closest bearing.
  const ux = Math.cos(closestDeg * DEG) * dir;
  const uy = -Math.sin(closestDeg * DEG) * dir;
  const durationS = (2 * half) / v;
  return {
    path: [
      { time_s: t0, position_m: [c[0]! - ux * half, c[1]! - uy * half, c[2]!] },
      { time_s: t0 + durationS, position_m: [c[0]! + ux * half, c[1]! + uy * half, c[2]!] },
    ],
    durationS,
  };
}

const ARRAYS = ['pair-20cm', 'square-10cm', 'square-20cm', 'triangle-10cm', 'tetrahedron-10cm', 'circle8-r5cm'] as const;
const PLANAR = ARRAYS.filter((a) => !a.startsWith('pair'));
const RATES = [10, 25, 50, 80] as const;
const KINDS: readonly CallKind[] = ['broadband', 'low-harmonic', 'high-sweep', 'high-band'];

function sceneOf(array: string, durationS: number, seed: number, sources: unknown[], windDbfs: number | null, rateHz: number): Record<string, unknown> {
  // Below 48 kHz a call's top is capped where the simulator allows it (MAX_SIGNAL_FRACTION x the
  // rate): a noise band's upper edge lowered, harmonics above it dropped.
  const top = Math.floor(MAX_SIGNAL_FRACTION * rateHz);
  for (const { signal: sig } of sources as { signal: { high_hz?: number; harmonics?: number[]; f0_hz?: number; start_hz?: number; end_hz?: number } }[]) {
    if (sig.high_hz !== undefined && sig.high_hz > top) sig.high_hz = top;
    const f = Math.max(sig.f0_hz ?? 0, sig.start_hz ?? 0, sig.end_hz ?? 0);
    if (sig.harmonics !== undefined) sig.harmonics = sig.harmonics.filter((_, k) => (k + 1) * f <= top);
  }
  return {
    sample_rate_hz: rateHz,
    duration_s: Math.round(durationS * 100) / 100,
    seed,
    speed_of_sound_m_s: 343,
    array: { geometry: array, position_m: [0, 0, ARRAY_Z], heading_deg: 0 },
    sources,
    noise: windDbfs === null ? { floor_dbfs: -60 } : { floor_dbfs: -60, wind_dbfs: windDbfs },
  };
}

function calls(rng: Rng, start: number, end: number | null): Record<string, unknown> {
  const length = 0.08 + 0.14 * rng.uniform();
  const every = Math.max(length + 0.15, 0.35 + 0.5 * rng.uniform());
  return { start_s: start, ...(end === null ? {} : { end_s: end }), length_s: Math.round(length * 1000) / 1000, every_s: Math.round(every * 1000) / 1000, jitter_s: 0.05 };
}

function pick<T>(rng: Rng, xs: readonly T[]): T {
  return xs[Math.floor(rng.uniform() * xs.length)]!;
}

/** The generated cells (seeded: the same list every run), rendered at `rateHz` (48 kHz unless asked). */
export function motionCells(quick: boolean, seed = 1313, rateHz = 48000): Cell[] {
  const cells: Cell[] = [];
  const rng = makeRng(seed);
  // pass: every rate x call kind, arrays in turn, random geometry of the pass.
  let n = 0;
  for (const rate of RATES) {
    for (const kind of KINDS) {
      const array = ARRAYS[n % ARRAYS.length]!;
      const pairLike = array.startsWith('pair');
      const closest = pairLike ? -15 + 30 * rng.uniform() : -180 + 360 * rng.uniform();
      const d = 6 + 14 * rng.uniform();
      const h = pairLike ? 0 : 6 * rng.uniform();
      const p = pass(closest, d, h, rate, pairLike ? 55 : 65, 10, 0.3, rng.uniform() < 0.5 ? 1 : -1);
      const level = -24 - 8 * rng.uniform();
      const src = { name: 'passer', path: p.path, signal: signalOf(kind, rng), level: { dbfs_at_array: Math.round(level) }, calls: calls(rng, 0.4, p.durationS + 0.3) };
      const wind = rng.uniform() < 0.4 ? Math.round(-45 - 10 * rng.uniform()) : null;
      cells.push({
        id: `pas${String(++n).padStart(2, '0')}`,
        family: 'pass',
        condition: `${array}, ${kind}, peak ${rate} deg/s, d ${d.toFixed(0)} m, h ${h.toFixed(0)} m, ${Math.round(level)} dBFS${wind === null ? '' : `, wind ${wind} dBFS`}`,
        scene: sceneOf(array, p.durationS + 0.8, 500 + n, [src], wind, rateHz),
        cRatio: 1,
      });
    }
  }
  // cross: two callers whose bearings cross near the middle.
  for (let i = 0; i < 6; i++) {
    const array = pick(rng, PLANAR);
    const centre = -180 + 360 * rng.uniform();
    const dur = 6 + 4 * rng.uniform();
    const spanA = 40 + 60 * rng.uniform();
    const spanB = 15 + 30 * rng.uniform();
    const kindA = pick(rng, ['broadband', 'low-harmonic', 'high-sweep'] as const);
    const kindB = pick(rng, ['broadband', 'low-harmonic'] as const);
    const ra = 8 + 8 * rng.uniform();
    const rb = 8 + 8 * rng.uniform();
    const mk = (name: string, from: number, to: number, r: number, kind: CallKind, start: number): unknown => ({
      name,
      path: [{ time_s: 0, position_m: at(from, r, ARRAY_Z + 1) }, { time_s: dur, position_m: at(to, r, ARRAY_Z + 1) }],
      signal: signalOf(kind, rng),
      level: { dbfs_at_array: -26 },
      calls: calls(rng, start, null),
    });
    cells.push({
      id: `crs${String(i + 1).padStart(2, '0')}`,
      family: 'cross',
      condition: `${array}, ${kindA} over ${spanA.toFixed(0)} deg x ${kindB} over ${spanB.toFixed(0)} deg in ${dur.toFixed(1)} s`,
      scene: sceneOf(array, dur, 700 + i, [mk('a', centre - spanA / 2, centre + spanA / 2, ra, kindA, 0.2), mk('b', centre + spanB / 2, centre - spanB / 2, rb, kindB, 0.4)], null, rateHz),
      cRatio: 1,
    });
  }
  // chorus: two choruses in bouts and a passer across one of them, at three speed-of-sound errors.
  for (let i = 0; i < 4; i++) {
    const array = pick(rng, PLANAR);
    const a = -180 + 360 * rng.uniform();
    const b = a + 60 + 180 * rng.uniform();
    const dur = 20;
    const chorus = (name: string, az: number, f0: number, start: number): unknown => ({
      name,
      position_m: at(az, 8 + 10 * rng.uniform(), 0.2),
      signal: { type: 'tone', f0_hz: f0, harmonics: [1, 0.6, 0.35, 0.2], pulse_rate_hz: 30 + 20 * rng.uniform(), pulse_duty: 0.6 },
      level: { dbfs_at_array: -28 },
      calls: { start_s: start, length_s: 0.25, every_s: 0.7, jitter_s: 0.1, per_bout: 5 + Math.floor(4 * rng.uniform()), bout_gap_s: 3 + 3 * rng.uniform() },
    });
    const rate = 15 + 25 * rng.uniform();
    const p = pass(a + (rng.uniform() < 0.5 ? -1 : 1) * 90, 15, 4, rate, 60, 12, 4, rng.uniform() < 0.5 ? 1 : -1);
    const passer = { name: 'passer', path: p.path, signal: signalOf(pick(rng, ['broadband', 'high-sweep', 'low-harmonic'] as const), rng), level: { dbfs_at_array: -26 }, calls: calls(rng, 4.2, 4 + p.durationS) };
    const scene = sceneOf(array, dur, 900 + i, [chorus('chorus-a', a, 450 + 200 * rng.uniform(), 0.5), chorus('chorus-b', b, 700 + 300 * rng.uniform(), 1.1), passer], -50, rateHz);
    for (const cRatio of quick ? [1] : [1, 1.01, 0.98]) {
      cells.push({
        id: `cho${String(i + 1).padStart(2, '0')}${cRatio === 1 ? '' : cRatio > 1 ? 'p1' : 'm2'}`,
        family: 'chorus',
        condition: `${array}, choruses at ${a.toFixed(0)} and ${b.toFixed(0)} deg, passer at ${rate.toFixed(0)} deg/s${cRatio === 1 ? '' : `, c ${cRatio > 1 ? '+1' : '-2'} %`}`,
        scene,
        cRatio,
      });
    }
  }
  return quick ? cells.filter((_, i) => i % 3 === 0) : cells;
}

const BAT_ARRAYS = ['tetrahedron-10cm', 'square-10cm', 'triangle-10cm', 'circle8-r5cm'] as const;
const BAT_RATES = [96000, 192000, 384000] as const;

/** A bat's call: a downward sweep over the ultrasound below the rate's limit, 2-10 ms, one every 60-140 ms. */
function batCall(rng: Rng, rateHz: number, start: number): { signal: Record<string, unknown>; calls: Record<string, unknown> } {
  const hi = Math.round(Math.min(0.44 * rateHz, 30000 + 60000 * rng.uniform()));
  const lo = Math.round(Math.max(15000, hi * (0.4 + 0.25 * rng.uniform())));
  const length = 0.002 + 0.008 * rng.uniform();
  const every = 0.06 + 0.08 * rng.uniform();
  return {
    signal: { type: 'sweep', start_hz: hi, end_hz: lo, shape: 'exponential' },
    calls: { start_s: start, length_s: Math.round(length * 10000) / 10000, every_s: Math.round(every * 1000) / 1000, jitter_s: 0.01 },
  };
}

/** The bats family (seeded): four single passes and two pairs of bats whose bearings cross, each at a rate of BAT_RATES. */
export function batCells(seed = 1313): Cell[] {
  const cells: Cell[] = [];
  const rng = makeRng(seed + 77);
  for (let i = 0; i < 6; i++) {
    const array = BAT_ARRAYS[i % BAT_ARRAYS.length]!;
    const rateHz = pick(rng, BAT_RATES);
    const two = i >= 4;
    const mk = (name: string): { src: unknown; text: string; durationS: number } => {
      const peak = 20 + 80 * rng.uniform();
      const d = 3 + 9 * rng.uniform();
      const h = 4 * rng.uniform();
      const p = pass(-180 + 360 * rng.uniform(), d, h, peak, 60, 6, 0.1, rng.uniform() < 0.5 ? 1 : -1);
      const level = Math.round(-42 + 14 * rng.uniform());
      const call = batCall(rng, rateHz, 0.1 + 0.05 * rng.uniform());
      const sig = call.signal as { start_hz: number; end_hz: number };
      const c = call.calls as { length_s: number; every_s: number };
      return {
        src: { name, path: p.path, signal: call.signal, level: { dbfs_at_array: level }, calls: call.calls },
        text: `${name} ${(sig.start_hz / 1000).toFixed(0)}-${(sig.end_hz / 1000).toFixed(0)} kHz ${(c.length_s * 1000).toFixed(1)} ms every ${(c.every_s * 1000).toFixed(0)} ms, peak ${peak.toFixed(0)} deg/s, d ${d.toFixed(0)} m, ${level} dBFS`,
        durationS: p.durationS,
      };
    };
    const bats = two ? [mk('bat-a'), mk('bat-b')] : [mk('bat')];
    const durationS = Math.max(...bats.map((b) => b.durationS)) + 0.3;
    const scene = sceneOf(array, durationS, 1100 + i, bats.map((b) => b.src), null, rateHz);
    scene.noise = { floor_dbfs: -62 };
    cells.push({
      id: `bat${String(i + 1).padStart(2, '0')}`,
      family: 'bats',
      condition: `${array}, ${rateHz / 1000} kHz, ${bats.map((b) => b.text).join('; ')}`,
      scene,
      cRatio: 1,
      args: ['--profile', 'bats'],
    });
  }
  return cells;
}

function cacheDir(): string {
  const d = process.env.BEARLINE_MOTION_CACHE ?? join(tmpdir(), 'bearline-motion-cache');
  mkdirSync(d, { recursive: true });
  return d;
}

function run(args: string[]): string {
  const r = spawnSync(process.execPath, [BIN, ...args], { encoding: 'utf8', maxBuffer: 1 << 28 });
  if (r.status !== 0) throw new Error(`bearline ${args.join(' ')} failed (${r.status}): ${r.stderr}`);
  return r.stdout;
}

/** Render (cached by the scene's text) and return the WAV path. */
export function rendered(cell: Cell): string {
  const text = JSON.stringify(cell.scene);
  const key = createHash('sha256').update(text).digest('hex').slice(0, 16);
  const wav = join(cacheDir(), `${key}.wav`);
  if (!existsSync(wav)) {
    const scenePath = join(cacheDir(), `${key}.scene.json`);
    writeFileSync(scenePath, text);
    // A name of this process' own: two runs rendering the same scene at once (two draws side by
    // side) each rename their own files; the WAV, renamed last, marks a whole rendering.
    const tmp = join(cacheDir(), `${key}.${process.pid}.part.wav`);
    run(['simulate', '--scene', scenePath, '--out', tmp, '--float']);
    renameSync(tmp.replace(/\.wav$/, '.truth.jsonl'), wav.replace(/\.wav$/, '.truth.jsonl'));
    renameSync(tmp.replace(/\.wav$/, '.array.json'), wav.replace(/\.wav$/, '.array.json'));
    renameSync(tmp, wav);
  }
  return wav;
}

export interface CellResult {
  id: string;
  family: Family;
  condition: string;
  scores: TrackScores;
  /** The same scan with events near two sources left out (no kept correspondence: the figures before it). */
  strict: TrackScores;
  /** Tracks whose attributed events come from two sources (minor share over 5 %). */
  mixedTracks: number;
}

export function runCell(cell: Cell, set: readonly string[]): CellResult {
  const wav = rendered(cell);
  const extra = set.flatMap((s) => ['--' + s.split('=')[0], s.slice(s.indexOf('=') + 1)]);
  const c = 343 * cell.cRatio;
  const out = run(['scan', wav, '--array', wav.replace(/\.wav$/, '.array.json'), '--speed-of-sound', c.toFixed(2), ...(cell.args ?? []), ...extra]);
  const events = out.split('\n').filter((l) => l.trim() !== '').map((l) => JSON.parse(l) as EventRecord);
  const truth = indexTruth(parseTruth(readFileSync(wav.replace(/\.wav$/, '.truth.jsonl'), 'utf8'), 'truth'));
  const scores = scoreTracks(events, truth, TRUTH_STEP_S);
  const strict = scoreTracks(events, truth, TRUTH_STEP_S, undefined, { keepCorrespondence: false });
  const mixedTracks = scores.tracks.filter((t) => t.attributed >= 2 && t.purity < 0.95).length;
  return { id: cell.id, family: cell.family, condition: cell.condition, scores, strict, mixedTracks };
}

const pct = (x: number): string => `${(100 * x).toFixed(0)}%`.padStart(4);

export function formatMotion(results: readonly CellResult[]): string[] {
  const lines = ['motion matrix: per source, purity of its main track / completeness / id switches; mixed = tracks holding two sources'];
  for (const r of results) {
    const per = r.scores.sources
      .map((s) => {
        const t = r.scores.tracks.find((x) => x.track === s.track);
        return `${s.source} ${t ? pct(t.purity) : '   -'}/${pct(s.completeness)}/${s.idSwitches}`;
      })
      .join('  ');
    lines.push(`  ${r.id.padEnd(8)} ${per.padEnd(62)} mixed ${r.mixedTracks}  ${r.condition}`);
  }
  lines.push('', 'summary (targets: purity >= 95 %, completeness >= 80 %, at most one id switch per crossing, no mixed track):');
  const fams: (Family | 'all')[] = ['pass', 'cross', 'chorus', 'bats', 'all'];
  for (const f of fams) {
    const rs = results.filter((r) => f === 'all' || r.family === f);
    if (rs.length === 0) continue;
    const srcs = rs.flatMap((r) => r.scores.sources.map((s) => ({ s, t: r.scores.tracks.find((x) => x.track === s.track) })));
    const pure = srcs.filter((x) => (x.t?.purity ?? 0) >= 0.95).length;
    const complete = srcs.filter((x) => x.s.completeness >= 0.8).length;
    const meanC = srcs.reduce((a, x) => a + x.s.completeness, 0) / Math.max(1, srcs.length);
    const switches = srcs.reduce((a, x) => a + x.s.idSwitches, 0);
    const mixed = rs.reduce((a, r) => a + r.mixedTracks, 0);
    lines.push(`  ${f.padEnd(7)} ${String(rs.length).padStart(3)} cells, ${String(srcs.length).padStart(3)} sources: pure ${pct(pure / Math.max(1, srcs.length))}, completeness >= 80 % ${pct(complete / Math.max(1, srcs.length))} (mean ${pct(meanC)}), id switches ${switches}, mixed tracks ${mixed}`);
  }
  lines.push('', 'strict attribution (an event near two sources left out, not given to its track\'s source):');
  for (const f of fams) {
    const rs = results.filter((r) => f === 'all' || r.family === f);
    if (rs.length === 0) continue;
    const srcs = rs.flatMap((r) => r.strict.sources);
    const complete = srcs.filter((x) => x.completeness >= 0.8).length;
    const meanC = srcs.reduce((a, x) => a + x.completeness, 0) / Math.max(1, srcs.length);
    const switches = srcs.reduce((a, x) => a + x.idSwitches, 0);
    lines.push(`  ${f.padEnd(7)} completeness >= 80 % ${pct(complete / Math.max(1, srcs.length))} (mean ${pct(meanC)}), id switches ${switches}`);
  }
  lines.push('', 'calls by what their time holds (src/accuracy/track-scores.ts): on the main track / on another track of the source / only another source\'s events / only events of no source / no event:');
  for (const f of fams) {
    const srcs = results.filter((r) => f === 'all' || r.family === f).flatMap((r) => r.scores.sources);
    if (srcs.length === 0) continue;
    const calls = srcs.reduce((a, x) => a + x.calls, 0);
    const sum = (k: keyof SourceCompleteness['missed']): number => srcs.reduce((a, x) => a + x.missed[k], 0);
    const parts = [calls - sum('otherTrack') - sum('otherSource') - sum('unattributed') - sum('none'), sum('otherTrack'), sum('otherSource'), sum('unattributed'), sum('none')];
    lines.push(`  ${f.padEnd(7)} ${String(calls).padStart(5)} calls: ${parts.map((n) => `${n} (${pct(n / Math.max(1, calls)).trim()})`).join(' / ')}`);
  }
  return lines;
}

export function motionMatrixCli(argv: readonly string[]): number {
  const quick = argv.includes('--quick');
  const bats = argv.includes('--bats');
  const set: string[] = [];
  let json: string | null = null;
  let only: string[] = [];
  let seed = 1313;
  let rateHz = 48000;
  for (let i = 0; i < argv.length; i++) {
    if (argv[i] === '--set') set.push(argv[++i] ?? '');
    else if (argv[i] === '--json') json = argv[++i] ?? null;
    else if (argv[i] === '--cells') only = (argv[++i] ?? '').split(',');
    else if (argv[i] === '--seed') seed = Number(argv[++i]);
    else if (argv[i] === '--rate') rateHz = Number(argv[++i]);
    else if (argv[i] !== '--quick' && argv[i] !== '--bats') {
      console.error(`motion-matrix: unknown argument ${argv[i]} (give --quick, --bats, --cells ID,..., --seed N, --rate HZ, --json FILE, --set flag=value with a scan flag name)`);
      return 2;
    }
  }
  if (!Number.isInteger(seed)) {
    console.error('motion-matrix: --seed takes an integer (1313 is the matrix the figures in the notes use; others are held-out draws)');
    return 2;
  }
  if (!Number.isInteger(rateHz) || rateHz < 8000 || rateHz > 192000) {
    console.error('motion-matrix: --rate takes a sample rate in Hz from 8000 to 192000 (48000 unless given)');
    return 2;
  }
  if (set.some((s) => !/^[a-z-]+=.+$/.test(s))) {
    console.error('motion-matrix: --set takes a scan flag and value, e.g. --set rate-wander=5');
    return 2;
  }
  const cells = (bats ? batCells(seed) : motionCells(quick, seed, rateHz)).filter((c) => only.length === 0 || only.some((o) => c.id.startsWith(o)));
  const results: CellResult[] = [];
  cells.forEach((c, i) => {
    if (process.stderr.isTTY) process.stderr.write(`\r\x1b[K${i + 1}/${cells.length} ${c.id}`);
    results.push(runCell(c, set));
  });
  if (process.stderr.isTTY) process.stderr.write('\r\x1b[K');
  console.log([`settings: ${set.length ? set.join(' ') : 'defaults'}${bats ? ', the bats family with --profile bats' : rateHz === 48000 ? '' : `, scenes at ${rateHz} Hz`}`, ...formatMotion(results)].join('\n'));
  if (json) writeFileSync(json, JSON.stringify(results, null, 1));
  return 0;
}

if (process.argv[1] && import.meta.url === new URL(`file://${process.argv[1]}`).href) {
  process.exitCode = motionMatrixCli(process.argv.slice(2));
}

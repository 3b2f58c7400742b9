/**
 * The README's command lines run as written (issue 17 item 1), so the README cannot rot: every
 * line of its plain fenced blocks is either run here (with `bearline` on PATH as an installed
 * command would be, in a folder where the files it names were made first) or listed below as
 * skipped with the reason (hardware, network, real time). A line added to or changed in the
 * README that is in neither list fails the test until it is classified.
 *
 * The checks on what the commands write are against outside facts: a call's direction made by
 * sox (whole-sample delays d sin(az) / c for the pair), the marsh example's station geometry
 * (a caller where both bearing lines cross), and sox reading the WAVs bearline writes.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { chmodSync, copyFileSync, existsSync, mkdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { BIN } from '../helpers/cli.js';
import { tempDir } from '../helpers/temp-dir.js';

const ROOT = new URL('../../', import.meta.url).pathname;
const README = readFileSync(join(ROOT, 'README.md'), 'utf8');

/** The command lines of the README's plain fenced blocks (``` without a language), continuation lines joined. */
export function readmeCommands(text: string): string[] {
  const lines = text.split('\n');
  const out: string[] = [];
  let inBlock = false;
  let plain = false;
  for (let i = 0; i < lines.length; i++) {
    const t = lines[i]!.trim();
    if (t.startsWith('```')) {
      if (!inBlock) plain = t === '```';
      inBlock = !inBlock;
      continue;
    }
    if (!inBlock || !plain || t === '') continue;
    let cmd = t;
    while (cmd.endsWith('\\') && i + 1 < lines.length) cmd = `${cmd.slice(0, -1).trimEnd()} ${lines[++i]!.trim()}`;
    out.push(cmd);
  }
  return out;
}

/** The command without its trailing comment. */
const bare = (line: string): string => line.replace(/\s+#.*$/, '').trim();

const SKIPPED: Record<string, string> = {
  'npm ci && npm start': 'reinstalls the checkout and runs the demo in real time (60 s); .ci/run does the install, test/accuracy/demo-scene.test.ts the demo',
  'npm test': 'the test suite itself',
  'npm start': 'real time (60 s) with a viewer on the fixed port 8417; the demo scene is tested in test/accuracy',
  'bearline demo --feed-port 0': 'real time (60 s) with a viewer; the feed is tested in test/live and test/feed',
  'bearline listen --spacing 0.2 --recorder arecord --device hw:1,0': 'needs a sound card (test/live runs listen with stand-in recorders)',
  'arecord -f S16_LE -r 48000 -c 2 -t raw | bearline listen --stdin --rate 48000 --channels 2 --spacing 0.2': 'needs a sound card (test/live/listen.test.ts pipes sox into listen --stdin)',
  'bearline listen --array square-10cm --serve': 'needs a sound card (the sox recorder)',
  'bearline listen --array square-10cm --profile station-low-cpu --station marsh-east --quiet --log-dir /var/lib/bearline/logs --mqtt mqtt://192.168.1.10:1883 --health 8418':
    'needs a sound card and a broker on the network (test/live/station.test.ts runs it with a stand-in recorder and a local Mosquitto)',
  "mosquitto_sub -h 192.0.2.10 -t 'bearline/+/events' -q 1 -c -i pond-watcher": 'a broker on the network (192.0.2.10 is a documentation address)',
  'curl -s http://127.0.0.1:8418/health': 'needs a running station (test/live/station.test.ts fetches /health)',
  'npm install -g .': 'installs into the global prefix; test/station/install.test.ts runs it into a temporary prefix',
  'bearline locate --stations marsh.json --mqtt mqtt://192.0.2.10:1883 --serve > fixes.jsonl':
    'a broker on the network (192.0.2.10 is a documentation address); test/fleet/locate-live.test.ts runs live locating against a local Mosquitto',
  'mosquitto_sub -h 192.0.2.10 -t bearline/fixes -q 1': 'a broker on the network (192.0.2.10 is a documentation address)',
  'bearline report /var/lib/bearline/logs --out week.html': "a station's log folder at its installed path; the logs/ line below runs report on a folder of station logs made here",
};

const C = 343;
const RATE = 48_000;

/** sox noise on M channels, channel i delayed by delays[i] seconds (whole samples at 48 kHz), `seconds` long. */
function soxTake(path: string, delays: readonly number[], seconds: number, effects: string[] = []): void {
  const d = delays.map((x) => (Math.round(x * RATE) / RATE).toFixed(7));
  execFileSync('sox', ['-R', '-n', '-r', String(RATE), '-c', String(delays.length), '-b', '16', path, 'synth', String(seconds), 'whitenoise', 'remix', ...delays.map(() => '1'), 'delay', ...d, 'gain', '-12', ...effects]);
}

/** Arrival delays (s) at each mic of a far-field source at azimuth/elevation (interface.md's frame), least one 0. */
function delaysFor(positions: readonly number[][], azDeg: number, elDeg = 0): number[] {
  const az = (azDeg * Math.PI) / 180;
  const el = (elDeg * Math.PI) / 180;
  const u = [Math.sin(az) * Math.cos(el), Math.cos(az) * Math.cos(el), Math.sin(el)];
  const t = positions.map((p) => -(p[0]! * u[0]! + p[1]! * u[1]! + p[2]! * u[2]!) / C);
  const min = Math.min(...t);
  return t.map((x) => x - min);
}

const positionsOf = (file: string): number[][] => (JSON.parse(readFileSync(file, 'utf8')) as { mics: { position_m: number[] }[] }).mics.map((m) => m.position_m);

describe('README command lines', () => {
  const tmp = tempDir('readme');
  const work = join(tmp.dir, 'work');
  const bin = join(tmp.dir, 'bin');
  const commands = readmeCommands(README).map(bare);
  const runnable = commands.filter((c) => !(c in SKIPPED));
  const results = new Map<string, { status: number | null; stderr: string }>();

  beforeAll(() => {
    mkdirSync(work, { recursive: true });
    mkdirSync(bin, { recursive: true });
    // `bearline` on PATH, as `npm install -g .` puts it there (test/station/install.test.ts checks that install).
    writeFileSync(join(bin, 'bearline'), `#!/bin/sh\nexec "${process.execPath}" "${BIN}" "$@"\n`);
    chmodSync(join(bin, 'bearline'), 0o755);
    const at = (name: string): string => join(work, name);
    // The files the commands name, made first.
    const pair = [[-0.1, 0, 0], [0.1, 0, 0]];
    soxTake(at('night.wav'), delaysFor(pair, 30), 0.3, ['pad', '0.5', '0.3', 'repeat', '3']); // four calls of 0.3 s
    copyFileSync(join(ROOT, 'configs/arrays/square-10cm.json'), at('my-array.json'));
    copyFileSync(join(ROOT, 'configs/arrays/square-10cm.json'), at('square-10cm.json'));
    copyFileSync(join(ROOT, 'configs/arrays/tetrahedron-10cm.json'), at('cube.json'));
    const square = positionsOf(at('square-10cm.json'));
    soxTake(at('pond.wav'), delaysFor(square, -60), 3);
    soxTake(at('long.flac'), delaysFor(square, 45), 3);
    const scene = JSON.parse(readFileSync(join(ROOT, 'configs/scenes/wetland-dusk.json'), 'utf8')) as Record<string, unknown>;
    writeFileSync(at('my-scene.json'), JSON.stringify({ ...scene, duration_s: 6 }));
    // accuracy room.wav: a recording rendered by simulate, with its truth and array beside it
    execFileSync(process.execPath, [BIN, 'simulate', '--scene', at('my-scene.json'), '--out', at('room.wav')], { stdio: 'ignore' });
    // scan --profile bats: a bat passing a 10 cm tetrahedron at 192 kHz (short sweeps), rendered by simulate
    const bat = { name: 'bat', path: [{ time_s: 0, position_m: [-8, 5, 4] }, { time_s: 1, position_m: [-4, 6, 4] }], signal: { type: 'sweep', start_hz: 70000, end_hz: 30000, shape: 'exponential' }, level: { dbfs_at_array: -30 }, calls: { start_s: 0.05, length_s: 0.005, every_s: 0.08 } };
    writeFileSync(at('bats-scene.json'), JSON.stringify({ sample_rate_hz: 192000, duration_s: 1, seed: 3, array: { geometry: 'tetrahedron-10cm', position_m: [0, 0, 1.5] }, sources: [bat], noise: { floor_dbfs: -65 } }));
    execFileSync(process.execPath, [BIN, 'simulate', '--scene', at('bats-scene.json'), '--out', at('bats-192k.wav')], { stdio: 'ignore' });
    // locate: the marsh example's stations; a caller at the origin, due south of reed-north (heading 180) and due west of dyke (heading 270): azimuth 0 from both
    copyFileSync(join(ROOT, 'configs/stations-marsh-example.json'), at('marsh.json'));
    // The call leaves the origin at 8.834 s: it reaches reed-north (400 m, clock synced) at 10.000 s
    // and dyke (500 m) at 10.292 s true time, which dyke's clock (0.8 s fast) stamps 11.092 s.
    const ev = (track: number, startS: number, station?: string): string => JSON.stringify({ ...(station ? { station } : {}), start_s: startS, end_s: startS + 0.3, azimuth_deg: 0, spread_deg: 1, confidence: 0.9, track }) + '\n';
    writeFileSync(at('north.jsonl'), ev(1, 10));
    writeFileSync(at('dyke.jsonl'), ev(3, 11.092));
    writeFileSync(at('all-stations.jsonl'), ev(1, 10, 'reed-north') + ev(3, 11.092, 'dyke'));
    // report logs/: a station's rotated log folder (NAME.events.STAMP.jsonl) with calls of tracks 1 to 3 that night
    mkdirSync(at('logs'));
    const call = (utc: string, track: number, bearing: number): string =>
      JSON.stringify({ start_s: 0, end_s: 0.2, utc, azimuth_deg: bearing, bearing_deg: bearing, spread_deg: 1, confidence: 0.9, track }) + '\n';
    writeFileSync(at('logs/marsh-east.events.20260501T200000Z.jsonl'), call('2026-05-01T21:00:00.000Z', 1, 40) + call('2026-05-01T23:30:00.000Z', 2, 200) + call('2026-05-02T01:00:00.000Z', 3, 300));
        // check-array takes: the pair at five directions, the square at eight, a long take of the 3-D array cut by a span list
    for (const [az, name] of [[-60, 'm60'], [-30, 'm30'], [0, 'z'], [30, 'p30'], [60, 'p60']] as const) soxTake(at(`${name}.wav`), delaysFor(pair, az), 2);
    for (const [az, name] of [[0, 'a'], [45, 'b'], [90, 'c'], [135, 'd'], [180, 'e'], [-135, 'f'], [-90, 'g'], [-45, 'h']] as const) soxTake(at(`${name}.wav`), delaysFor(square, az), 2);
    const cube = positionsOf(at('cube.json'));
    const dirs = [[0, 0], [90, 30], [180, -20], [-90, 45], [45, -40]] as const;
    dirs.forEach(([az, el], i) => soxTake(at(`span${i}.wav`), delaysFor(cube, az, el), 2));
    execFileSync('sox', [...dirs.map((_, i) => at(`span${i}.wav`)), at('long-take.wav')]);
    writeFileSync(at('bench.spans'), '# FROM_S TO_S AZ_DEG EL_DEG\n' + dirs.map(([az, el], i) => `${i * 2} ${i * 2 + 2} ${az} ${el}`).join('\n') + '\n');
    for (const cmd of runnable) {
      const r = spawnSync('sh', ['-c', cmd], {
        cwd: work,
        encoding: 'utf8',
        env: { ...process.env, PATH: `${bin}:${process.env.PATH}`, XDG_CACHE_HOME: join(tmp.dir, 'cache') },
        timeout: 240_000,
        maxBuffer: 1 << 26,
      });
      results.set(cmd, { status: r.status, stderr: r.stderr });
    }
  }, 600_000);

  it('every command line is run here or skipped with a reason (a new README line must be classified)', () => {
    expect(commands.length).toBeGreaterThan(20);
    expect(runnable.length).toBeGreaterThanOrEqual(15);
    const stale = Object.keys(SKIPPED).filter((k) => k !== 'npm install -g .' && !commands.includes(k));
    expect(stale, 'skipped lines no longer in the README').toEqual([]);
    // the install line is in the quick start
    expect(commands).toContain('npm install -g .');
  });

  it('each runnable line exits 0 with no stack trace', () => {
    const failed = [...results].filter(([, r]) => r.status !== 0 || /^\s+at .+:\d+:\d+\)?$/m.test(r.stderr)).map(([c, r]) => `${c}\n  -> exit ${r.status}: ${r.stderr.slice(-400)}`);
    expect(failed).toEqual([]);
  });

  it('and writes what it says, with the directions the files were made with', () => {
    const at = (name: string): string => join(work, name);
    const events = readFileSync(at('night.events.jsonl'), 'utf8').trim().split('\n').map((l) => JSON.parse(l) as { azimuth_deg: number });
    expect(events).toHaveLength(4);
    for (const e of events) expect(Math.abs(e.azimuth_deg - 30)).toBeLessThan(2); // sox's whole-sample delay for 30 deg: within a sample (about 1.2 deg)
    expect(readFileSync(at('pond-frames.csv'), 'utf8').split('\n')[0]).toMatch(/^time_s,/);
    const fix = JSON.parse(readFileSync(at('calls.geojson'), 'utf8')) as { features: { properties: { east_m: number; north_m: number } }[] };
    expect(fix.features).toHaveLength(1);
    expect(Math.hypot(fix.features[0]!.properties.east_m, fix.features[0]!.properties.north_m)).toBeLessThan(1);
    expect(readFileSync(at('calls.csv'), 'utf8').split('\n')).toHaveLength(3);
    for (const f of ['dusk.wav', 'dusk.truth.jsonl', 'dusk.array.json', 'rec.wav', 'sweep.wav', 'noise.wav', 'clicks.wav', 'square.json', 'square.svg', 'square-fixed.json']) {
      expect(existsSync(at(f)) && statSync(at(f)).size > 0, f).toBe(true);
    }
    // sox reads the WAVs bearline wrote (rec.wav is float) without a warning
    for (const f of ['dusk.wav', 'rec.wav', 'sweep.wav']) {
      const r = spawnSync('sox', ['-V2', at(f), '-n', 'stat'], { encoding: 'utf8' });
      expect(r.status, f).toBe(0);
      expect(r.stderr, f).not.toMatch(/sox WARN|sox FAIL/);
    }
    // report: the last report line (the logs/ folder, tracks 1 and 2) wrote dusk.html, one page with its plots inline
    const page = readFileSync(at('dusk.html'), 'utf8');
    expect(page).toMatch(/<svg/);
    expect(page).not.toMatch(/https?:\/\//);
    const square = JSON.parse(readFileSync(at('square.json'), 'utf8')) as { verdict: string };
    expect(['pass', 'warn', 'fail']).toContain(square.verdict);
  });
});

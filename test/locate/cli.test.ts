import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, readdirSync, symlinkSync, writeFileSync } from 'node:fs';
import { dirname, join, relative } from 'node:path';
import ts from 'typescript';
import { beforeAll, describe, expect, it } from 'vitest';
import { tempDir } from '../helpers/temp-dir.js';
import { bearingTo } from './helpers.js';

const root = new URL('../..', import.meta.url).pathname;
const dir = tempDir('locate').dir;
// Transpile src/ once without type checks (tsc -p checks types elsewhere); plain node
// start-up per run keeps the suite fast.
const built = join(dir, 'dist');
beforeAll(() => {
  const walk = (d: string): string[] =>
    readdirSync(d, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? walk(join(d, e.name)) : e.name.endsWith('.ts') ? [join(d, e.name)] : []));
  for (const src of walk(join(root, 'src'))) {
    const out = join(built, relative(join(root, 'src'), src)).replace(/\.ts$/, '.js');
    mkdirSync(dirname(out), { recursive: true });
    const js = ts.transpileModule(readFileSync(src, 'utf8'), {
      compilerOptions: { module: ts.ModuleKind.ESNext, target: ts.ScriptTarget.ES2022 },
    }).outputText;
    writeFileSync(out, js);
  }
  // The build sits outside the checkout: give it the package's module type and dependencies.
  writeFileSync(join(dir, 'package.json'), '{"type": "module"}\n');
  symlinkSync(join(root, 'node_modules'), join(dir, 'node_modules'));
});

function run(args: string[]): { code: number; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, [join(built, 'cli/main.js'), 'locate', ...args], {
    cwd: root,
    encoding: 'utf8',
  });
  return { code: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
}

function file(name: string, content: string): string {
  const p = join(dir, name);
  writeFileSync(p, content);
  return p;
}

// A marsh with three stations around a reed bed and a bittern booming inside it.
const C = 343;
const origin = { lat_deg: 52.37, lon_deg: 4.89 };
const stations = [
  { id: 'reed-west', east_m: 0, north_m: 0, heading_deg: 45 },
  { id: 'reed-east', east_m: 640, north_m: 20, heading_deg: 300 },
  { id: 'dyke', east_m: 300, north_m: 560, heading_deg: 180 },
];
const bittern: [number, number] = [310, 240];
const stationFile = file('marsh.json', JSON.stringify({ origin, stations }));
function logFor(s: (typeof stations)[number], withStation: boolean): string {
  const t = 12 + Math.hypot(bittern[0] - s.east_m, bittern[1] - s.north_m) / C;
  // No bearing_deg: azimuth_deg plus the station's heading is used.
  let az = bearingTo([s.east_m, s.north_m], bittern) - s.heading_deg;
  az = ((az + 540) % 360) - 180;
  const rec = { start_s: t, end_s: t + 0.8, azimuth_deg: az, spread_deg: 1.5, confidence: 0.8, track: 3, ...(withStation ? { station: s.id } : {}) };
  return JSON.stringify(rec) + '\n';
}
const logs = stations.map((s) => file(`${s.id}.jsonl`, logFor(s, false)));
const assigned = stations.map((s, i) => `${s.id}=${logs[i]}`);

function expectUsageError(r: { code: number; stderr: string }, pattern: RegExp): void {
  expect(r.code).toBe(2);
  const lines = r.stderr.trim().split('\n');
  expect(lines).toHaveLength(1);
  expect(lines[0]).toMatch(pattern);
  expect(r.stderr).not.toMatch(/\s+at .+:\d+:\d+/); // no stack trace
}

// RFC 7946 (The GeoJSON Format): section 3.3 FeatureCollection with "features"; 3.2 Feature
// with "geometry" and "properties"; 3.1.2 Point with a single position; 3.1.1 a position
// is [longitude, latitude(, altitude)] in WGS 84; section 4: no "crs" member.
describe('bearline locate: GeoJSON per RFC 7946', () => {
  it('writes a FeatureCollection of Points with [lon, lat] and the fix properties', () => {
    const r = run(['--stations', stationFile, ...assigned]);
    expect(r.code).toBe(0);
    expect(r.stderr).toMatch(/1 fixes from 1 matched calls/);
    const gj = JSON.parse(r.stdout) as {
      type: string;
      crs?: unknown;
      features: { type: string; geometry: { type: string; coordinates: number[] }; properties: Record<string, unknown> }[];
    };
    expect(gj.type).toBe('FeatureCollection');
    expect(gj.crs).toBeUndefined();
    expect(gj.features).toHaveLength(1);
    const f = gj.features[0]!;
    expect(f.type).toBe('Feature');
    expect(f.geometry.type).toBe('Point');
    expect(f.geometry.coordinates.length).toBeGreaterThanOrEqual(2);
    expect(f.geometry.coordinates.length).toBeLessThanOrEqual(3);
    const [lon, lat] = f.geometry.coordinates as [number, number];
    // 310 m east and 240 m north of 52.37 N, 4.89 E: longitude first.
    expect(lon).toBeCloseTo(4.89 + 310 / (111_320 * Math.cos((52.37 * Math.PI) / 180)), 3);
    expect(lat).toBeCloseTo(52.37 + 240 / 111_250, 3);
    const p = f.properties;
    expect(p.time_s as number).toBeCloseTo(12, 3);
    expect(p.stations).toEqual(['reed-west', 'reed-east', 'dyke']);
    for (const k of ['ellipse_major_m', 'ellipse_minor_m', 'ellipse_orientation_deg', 'residual_m']) expect(typeof p[k]).toBe('number');
    expect(p.flags).toEqual([]);
    expect(p.east_m as number).toBeCloseTo(bittern[0], 1);
  });

  it('plain files with a "station" field in each record work the same, and --format csv --out writes CSV', () => {
    const plain = stations.map((s) => file(`${s.id}-tagged.jsonl`, logFor(s, true)));
    const out = join(dir, 'fixes.csv');
    const r = run(['--stations', stationFile, '--format', 'csv', '--out', out, ...plain]);
    expect(r.code).toBe(0);
    expect(r.stdout).toBe('');
    const rows = readFileSync(out, 'utf8').trim().split('\n');
    expect(rows[0]!.split(',')).toContain('lon_deg');
    expect(rows).toHaveLength(2);
  });
});

describe('bearline locate: bad input exits 2 with one line naming the field', () => {
  it.each([
    ['missing file', null, /cannot read station file .*no such file/],
    ['not JSON', '{"stations": [', /not valid JSON/],
    ['unknown field', JSON.stringify({ stations: [{ id: 'a', east_m: 0, north_m: 0, hedding_deg: 3 }, { id: 'b', east_m: 1, north_m: 0 }] }), /stations\[0\]\.hedding_deg is not a known field/],
    ['heading not a number', JSON.stringify({ stations: [{ id: 'a', east_m: 0, north_m: 0, heading_deg: 'east' }, { id: 'b', east_m: 1, north_m: 0 }] }), /stations\[0\] \('a'\)\.heading_deg must be a number/],
    ['latitude out of range', JSON.stringify({ stations: [{ id: 'a', lat_deg: 95, lon_deg: 0 }, { id: 'b', lat_deg: 0, lon_deg: 0 }] }), /stations\[0\] \('a'\)\.lat_deg is 95/],
    ['both kinds of position', JSON.stringify({ stations: [{ id: 'a', lat_deg: 5, lon_deg: 0, east_m: 3 }, { id: 'b', lat_deg: 0, lon_deg: 0 }] }), /both lat_deg\/lon_deg and east_m\/north_m/],
    ['no position', JSON.stringify({ stations: [{ id: 'a' }, { id: 'b', lat_deg: 0, lon_deg: 0 }] }), /stations\[0\] \('a'\) has no position/],
    ['duplicate id', JSON.stringify({ stations: [{ id: 'a', east_m: 0, north_m: 0 }, { id: 'a', east_m: 1, north_m: 0 }] }), /stations\[1\]\.id 'a' is used twice/],
    ['one station', JSON.stringify({ stations: [{ id: 'a', east_m: 0, north_m: 0 }] }), /at least 2 stations/],
    ['clock_synced not boolean', JSON.stringify({ stations: [{ id: 'a', east_m: 0, north_m: 0, clock_synced: 'yes' }, { id: 'b', east_m: 1, north_m: 0 }] }), /clock_synced must be true or false/],
    ['mixed positions without origin', JSON.stringify({ stations: [{ id: 'a', east_m: 0, north_m: 0 }, { id: 'b', lat_deg: 1, lon_deg: 0 }] }), /add "origin"/],
  ])('station file: %s', (name, content, pattern) => {
    const path = content === null ? join(dir, 'nope.json') : file(`bad-${name.replace(/\W/g, '-')}.json`, content);
    expectUsageError(run(['--stations', path, ...assigned]), pattern);
  });

  it('event log: a record without start_s names the file, line and field', () => {
    const bad = file('bad-line.jsonl', logFor(stations[0]!, false) + '\n' + JSON.stringify({ end_s: 1, azimuth_deg: 3, spread_deg: 1, confidence: 1, track: 1 }) + '\n');
    expectUsageError(run(['--stations', stationFile, `reed-west=${bad}`, assigned[1]!]), /bad-line\.jsonl line 3: field 'start_s' is missing/);
  });

  it.each([
    ['not JSON', '{"start_s": 1,', /line 1: not valid JSON/],
    ['band_hz reversed', JSON.stringify({ start_s: 1, end_s: 2, azimuth_deg: 3, spread_deg: 1, confidence: 1, track: 1, band_hz: [900, 400] }), /field 'band_hz' must be \[low, high\]/],
    ['bad utc', JSON.stringify({ start_s: 1, end_s: 2, azimuth_deg: 3, spread_deg: 1, confidence: 1, track: 1, utc: 'yesterday' }), /field 'utc' must be an ISO 8601/],
    ['other station', JSON.stringify({ start_s: 1, end_s: 2, azimuth_deg: 3, spread_deg: 1, confidence: 1, track: 1, station: 'dyke' }), /field 'station' is 'dyke' but the file was given as reed-west=/],
  ])('event log: %s', (name, content, pattern) => {
    const bad = file(`bad-log-${name.replace(/\W/g, '-')}.jsonl`, content + '\n');
    expectUsageError(run(['--stations', stationFile, `reed-west=${bad}`]), pattern);
  });

  it('event log: a plain file whose records name no station', () => {
    expectUsageError(run(['--stations', stationFile, logs[0]!]), /field 'station' is missing: give the log as STATION=/);
  });

  it('an unknown station in STATION=FILE, and a missing log', () => {
    expectUsageError(run(['--stations', stationFile, `heron=${logs[0]}`]), /station 'heron' is not in the station file/);
    expectUsageError(run(['--stations', stationFile, join(dir, 'absent.jsonl')]), /cannot read event log .*absent\.jsonl/);
  });

  it('--out naming an input log or the station file is refused, and the input is untouched', () => {
    const before = readFileSync(logs[0]!, 'utf8');
    expectUsageError(run(['--stations', stationFile, ...assigned, '--out', logs[0]!]), /--out .* would overwrite the input/);
    expectUsageError(run(['--stations', stationFile, ...assigned, '--out', stationFile]), /--out .* would overwrite the input/);
    expect(readFileSync(logs[0]!, 'utf8')).toBe(before);
  });

  it('bad option values name the flag', () => {
    expectUsageError(run(['--stations', stationFile, '--ellipse-level', '1.5', ...assigned]), /--ellipse-level <p>.*1\.5 is out of range/);
    expectUsageError(run(['--stations', stationFile, '--speed-of-sound', '340', '--temperature', '20', ...assigned]), /not both/);
  });

  it('GeoJSON from stations in local metres without an origin asks for one; nothing is written over --out', () => {
    const local = file('local.json', JSON.stringify({ stations }));
    const out = file('keep.geojson', 'earlier result\n');
    expectUsageError(run(['--stations', local, '--out', out, ...assigned]), /add "origin".*--format csv/);
    expect(readFileSync(out, 'utf8')).toBe('earlier result\n');
    const bad = file('bad-again.jsonl', '{"start_s": "soon"}\n');
    expectUsageError(run(['--stations', stationFile, '--out', out, `reed-west=${bad}`]), /field 'start_s' must be a number/);
    expect(readFileSync(out, 'utf8')).toBe('earlier result\n');
  });
});

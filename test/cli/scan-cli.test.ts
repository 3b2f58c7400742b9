import { writeFileSync, readFileSync, existsSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { pairAzimuthDeg } from '../../src/direction/pair-direction.js';
import { expectUsageFailure, runCli } from '../helpers/cli.js';
import { sox, soxDelayedSignal } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

const tmp = tempDir();
let pair: string;
beforeAll(() => {
  // A 0.2 m pair, channel 1 later by 100 samples at 480 kHz (208.3 us), made by sox.
  pair = soxDelayedSignal({ out: `${tmp.dir}/pair.wav`, delaysUp: [0, 100], durationS: 2, bits: 16 }, tmp.dir);
});
afterAll(() => tmp.cleanup());
const truthAz = pairAzimuthDeg(100 / 480000, 0.2, 343);

describe('bearline scan: frame records (interface.md fields)', () => {
  it('writes JSON Lines with the documented fields and the right azimuth', () => {
    const r = runCli(['scan', pair, '--spacing', '0.2', '--frames']);
    expect(r.status).toBe(0);
    const recs = r.stdout.trim().split('\n').map((l) => JSON.parse(l));
    expect(recs.length).toBeGreaterThan(150);
    for (const rec of recs) {
      for (const k of ['time_s', 'azimuth_deg', 'elevation_deg', 'confidence', 'tdoa_s', 'level_dbfs']) expect(rec).toHaveProperty(k);
      expect(rec.tdoa_s).toHaveLength(1);
      expect(rec.confidence).toBeGreaterThanOrEqual(0);
      expect(rec.confidence).toBeLessThanOrEqual(1);
      expect(rec.mirror).toBe('front-back');
      expect(rec.mirror_axis_deg).toBe(90);
    }
    const good = recs.filter((x) => x.azimuth_deg !== null && Math.abs(x.azimuth_deg - truthAz) < 0.5);
    expect(good.length / recs.length).toBeGreaterThan(0.95);
  });

  it('CSV and --out: written aside and renamed into place', () => {
    const out = `${tmp.dir}/frames.csv`;
    const r = runCli(['scan', pair, '--spacing', '0.2', '--frames', '--format', 'csv', '--out', out]);
    expect(r.status).toBe(0);
    expect(r.stdout).toBe('');
    const lines = readFileSync(out, 'utf8').trim().split('\n');
    expect(lines[0]).toBe('time_s,azimuth_deg,elevation_deg,confidence,level_dbfs,onset,track,sources,mirror,mirror_axis_deg,tdoa_s_0_1');
    expect(lines.length).toBeGreaterThan(150);
    expect(existsSync(`${out}.partial`)).toBe(false);
  });

  it('reads raw s16le from stdin (--stdin --rate --channels)', () => {
    const raw = sox([pair, '-t', 'raw', '-e', 'signed-integer', '-b', '16', '-L', '-']);
    const r = runCli(['scan', '--stdin', '--rate', '48000', '--channels', '2', '--spacing', '0.2', '--frames'], { input: raw });
    expect(r.status).toBe(0);
    const recs = r.stdout.trim().split('\n').map((l) => JSON.parse(l));
    expect(recs.length).toBeGreaterThan(150);
    expect(recs.filter((x) => x.azimuth_deg !== null && Math.abs(x.azimuth_deg - truthAz) < 0.5).length / recs.length).toBeGreaterThan(0.95);
  });

  it('--temperature changes c as the handbook formula says', () => {
    // c(30 C) = 349.0 m/s (CRC handbook, references.md): azimuth = -asin(c tdoa / D)
    const r = runCli(['scan', pair, '--spacing', '0.2', '--frames', '--temperature', '30']);
    const recs = r.stdout.trim().split('\n').map((l) => JSON.parse(l)).filter((x) => x.azimuth_deg !== null);
    const med = recs.map((x) => x.azimuth_deg).sort((a: number, b: number) => a - b)[recs.length >> 1];
    expect(med).toBeCloseTo(pairAzimuthDeg(100 / 480000, 0.2, 331.3 * Math.sqrt(1 + 30 / 273.15)), 1);
  });
});

describe('bearline scan: bad input exits 2 with one clear line', () => {
  it('missing file', () => expectUsageFailure(runCli(['scan', `${tmp.dir}/nope.wav`, '--spacing', '0.2']), /does not exist|not found|no such/i));
  it('not a WAV', () => {
    writeFileSync(`${tmp.dir}/notes.txt`, 'frogs at the east pond, 21:40\n'.repeat(20));
    expectUsageFailure(runCli(['scan', `${tmp.dir}/notes.txt`, '--spacing', '0.2']), /not a (RIFF|WAV)/i);
  });
  it('zero channels in the header', () => {
    const buf = readFileSync(pair);
    const b = Buffer.from(buf);
    b.writeUInt16LE(0, 22);
    writeFileSync(`${tmp.dir}/zero-ch.wav`, b);
    expectUsageFailure(runCli(['scan', `${tmp.dir}/zero-ch.wav`, '--spacing', '0.2']), /0 channels/);
  });
  it('mono file where a pair is needed', () => {
    sox(['-n', '-r', '48000', '-c', '1', `${tmp.dir}/mono.wav`, 'synth', '0.5', 'whitenoise']);
    expectUsageFailure(runCli(['scan', `${tmp.dir}/mono.wav`, '--spacing', '0.2']), /one channel/);
  });
  it('spacing <= 0 or absurd', () => {
    expectUsageFailure(runCli(['scan', pair, '--spacing', '0']), /spacing/);
    expectUsageFailure(runCli(['scan', pair, '--spacing', '-0.2']), /spacing/);
    expectUsageFailure(runCli(['scan', pair, '--spacing', '300']), /absurd/);
    expectUsageFailure(runCli(['scan', pair, '--spacing', '0.001']), /under two samples/);
  });
  it('no array given, unknown option, bad format', () => {
    expectUsageFailure(runCli(['scan', pair]), /--spacing D|--array/);
    expectUsageFailure(runCli(['scan', pair, '--spacing', '0.2', '--bogus']), /unknown option '--bogus'/);
    expectUsageFailure(runCli(['scan', pair, '--spacing', '0.2', '--format', 'xml']), /--format <jsonl\|csv>.*'xml' is not known; give one of jsonl, csv/);
    expectUsageFailure(runCli(['scan', pair, '--spacing', '0.2', '--frame', '1000']), /--frame 1000 must be a power of two/);
  });
  it('--out onto the input is refused and the input is untouched', () => {
    const before = readFileSync(pair);
    expectUsageFailure(runCli(['scan', pair, '--spacing', '0.2', '--out', pair]), /--out .* would overwrite the input/);
    expect(readFileSync(pair).equals(before)).toBe(true);
  });
});

describe('bearline scan: damaged files are analysed up to where they end', () => {
  it('truncated data chunk: warning, records up to the cut, exit 0', () => {
    const buf = readFileSync(pair);
    writeFileSync(`${tmp.dir}/cut.wav`, buf.subarray(0, 44 + 48000 * 4)); // 1 s of 2 s
    const r = runCli(['scan', `${tmp.dir}/cut.wav`, '--spacing', '0.2', '--frames']);
    expect(r.status).toBe(0);
    expect(r.stderr).toMatch(/truncated/);
    const recs = r.stdout.trim().split('\n').map((l) => JSON.parse(l));
    expect(recs.length).toBeGreaterThan(80);
    expect(recs[recs.length - 1].time_s).toBeLessThan(1.0);
  });
  it('header lying about the sizes (RIFF and data larger than the file)', () => {
    const b = Buffer.from(readFileSync(pair));
    b.writeUInt32LE(b.readUInt32LE(4) * 3, 4);
    b.writeUInt32LE(b.readUInt32LE(40) * 3, 40);
    writeFileSync(`${tmp.dir}/liar.wav`, b);
    const r = runCli(['scan', `${tmp.dir}/liar.wav`, '--spacing', '0.2', '--frames']);
    expect(r.status).toBe(0);
    expect(r.stderr).toMatch(/truncated|header/);
    expect(r.stdout.trim().split('\n').length).toBeGreaterThan(150);
  });
});

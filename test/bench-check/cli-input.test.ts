/**
 * Bad input to check-array and stimulus: one clear line on stderr, exit 2, no stack trace,
 * nothing already written lost (interface.md, "Exit codes"; RULES: bad input). The good
 * stimulus is checked against Farina's exponential sweep (AES 108th Convention, 2000):
 * instantaneous frequency f1 exp(t ln(f2/f1) / T), measured from zero crossings by numpy,
 * and its peak level read by sox's `stat`.
 */
import { execFileSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { expectUsageFailure, runCli } from '../helpers/cli.js';
import { sox } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';
import { numpyTakes, takeArgs, type MadeTake } from './bench-helpers.js';

describe('check-array and stimulus on bad input', () => {
  const tmp = tempDir('bearline-check-cli-');
  let takes: MadeTake[];
  let geo: string;
  const GEO_TEXT = JSON.stringify({ name: 'tri', mics: [{ channel: 0, position_m: [0, 0.05, 0] }, { channel: 1, position_m: [0.05, -0.03, 0] }, { channel: 2, position_m: [-0.05, -0.03, 0] }] });
  beforeAll(() => {
    takes = numpyTakes(tmp.dir, 'cli', { rate: 16000, duration_s: 0.5, positions_m: [[-0.1, 0, 0], [0.1, 0, 0]] }, [{ az: -30 }, { az: 30 }]);
    geo = join(tmp.dir, 'tri.json');
    writeFileSync(geo, GEO_TEXT);
  });
  afterAll(() => tmp.cleanup());

  it('rejects a take without a direction', () => {
    expectUsageFailure(runCli(['check-array', '--spacing', '0.2', takes[0]!.path]), /must be AZ=REC\.wav or AZ,EL=REC\.wav/);
  });
  it('rejects a missing recording', () => {
    expectUsageFailure(runCli(['check-array', '--spacing', '0.2', `10=${join(tmp.dir, 'nope.wav')}`]), /cannot read .*nope\.wav: no such file; check the path/);
  });
  it('rejects an azimuth out of range and an unknown option', () => {
    expectUsageFailure(runCli(['check-array', '--spacing', '0.2', `400=${takes[0]!.path}`]), /azimuth 400/);
    expectUsageFailure(runCli(['check-array', '--spacing', '0.2', ...takeArgs(takes), '--tol-ofset', '1']), /unknown option '--tol-ofset'/);
  });
  it('rejects takes whose channel count does not match the geometry', () => {
    expectUsageFailure(runCli(['check-array', '--array', geo, ...takeArgs(takes)]), /has 2 channels but the geometry "tri" lists 3 mics/);
  });
  it('rejects a bad tolerance', () => {
    expectUsageFailure(runCli(['check-array', '--spacing', '0.2', ...takeArgs(takes), '--tol-gain', '-1']), /--tol-gain <db>.*-1 is out of range; give a number from 0 to 60 dB/);
  });
  it('rejects a span beyond the recording and a malformed span line', () => {
    const spans = join(tmp.dir, 'bad.spans');
    writeFileSync(spans, '0 0.2 -30\n0.2 9 30\n');
    expectUsageFailure(runCli(['check-array', '--spacing', '0.2', '--spans', spans, takes[0]!.path]), /line 2: the span ends at 9 s/);
    writeFileSync(spans, '0 0.2 left\n');
    expectUsageFailure(runCli(['check-array', '--spacing', '0.2', '--spans', spans, takes[0]!.path]), /line 1: .* must be FROM_S TO_S AZ_DEG/);
  });
  it('never overwrites the input geometry, and keeps an earlier --json when the run fails', () => {
    expectUsageFailure(runCli(['check-array', '--array', geo, ...takeArgs(takes), '--write-geometry', geo]), /would overwrite the input/);
    expect(readFileSync(geo, 'utf8')).toBe(GEO_TEXT);
    const json = join(tmp.dir, 'keep.json');
    writeFileSync(json, '{"earlier": true}\n');
    expectUsageFailure(runCli(['check-array', '--spacing', '0.2', `5=${join(tmp.dir, 'missing.wav')}`, '--json', json]), /missing\.wav: no such file/);
    expect(readFileSync(json, 'utf8')).toBe('{"earlier": true}\n');
  });
  it('refuses --write-geometry when the takes cannot fix the positions (one direction)', () => {
    const out = join(tmp.dir, 'g.json');
    expectUsageFailure(runCli(['check-array', '--spacing', '0.2', takeArgs(takes)[0]!, '--write-geometry', out]), /do not determine the mic positions/);
  });
  it('stimulus: rejects a level above -1 dBFS and a bad kind, and keeps an existing file', () => {
    const out = join(tmp.dir, 'stim.wav');
    writeFileSync(out, 'old');
    expectUsageFailure(runCli(['stimulus', '--out', out, '--level', '0']), /--level <dbfs>.*0 is out of range; give a number from -120 to -1 dBFS/);
    expectUsageFailure(runCli(['stimulus', '--out', out, '--kind', 'chirp']), /--kind <sweep\|clicks\|noise>.*'chirp' is not known; give one of sweep, clicks, noise/);
    expect(readFileSync(out, 'utf8')).toBe('old');
  });
  it('stimulus --help carries the safe-level caution', () => {
    const r = runCli(['stimulus', '--help']);
    expect(r.status).toBe(0);
    expect(r.stdout.replace(/\s+/g, ' ')).toMatch(/CAUTION: test signals can damage hearing and speakers/);
    expect(r.stdout.replace(/\s+/g, ' ')).toMatch(/turn the playback volume all the way down/);
  });
  it('stimulus writes a log sweep that follows Farina\'s formula at the asked peak level', () => {
    const out = join(tmp.dir, 'sweep.wav');
    const r = runCli(['stimulus', '--out', out, '--duration', '2', '--repeat', '2', '--gap', '0.5', '--from', '200', '--to', '8000', '--level', '-12', '--rate', '48000']);
    expect(r.status).toBe(0);
    expect(Number(sox(['--i', '-D', out]).toString())).toBeCloseTo(2 * (0.5 + 2) + 0.5, 6);
    // sox prints `stat` on stderr.
    const stat = execFileSync('sh', ['-c', 'sox "$0" -n stat 2>&1', out], { encoding: 'utf8' });
    const max = Number(/Maximum amplitude:\s+([\d.]+)/.exec(stat)![1]);
    expect(20 * Math.log10(max)).toBeCloseTo(-12, 1);
    // Instantaneous frequency from zero crossings (numpy) at 0.5, 1.0 and 1.5 s into the first sweep.
    const py = `
import sys, wave, numpy as np
w = wave.open(sys.argv[1]); fs = w.getframerate(); raw = w.readframes(w.getnframes())
b = np.frombuffer(raw, dtype=np.uint8).reshape(-1, 3)
x = (b[:, 0].astype(np.int32) | (b[:, 1].astype(np.int32) << 8) | (b[:, 2].astype(np.int8).astype(np.int32) << 16)).astype(float)
out = []
for t in (0.5, 1.0, 1.5):
    s = x[int((0.5 + t - 0.01) * fs): int((0.5 + t + 0.01) * fs)]
    z = np.where(np.diff(np.signbit(s)))[0]
    out.append(fs * (len(z) - 1) / 2 / (z[-1] - z[0]))
print(' '.join(str(v) for v in out))
`;
    const measured = execFileSync('python3', ['-c', py, out], { encoding: 'utf8' }).trim().split(' ').map(Number);
    [0.5, 1.0, 1.5].forEach((t, i) => {
      const expected = 200 * Math.exp((t / 2) * Math.log(8000 / 200));
      expect(Math.abs(measured[i]! - expected) / expected).toBeLessThan(0.03);
    });
  });
});

/**
 * The scorer's small parts against outside definitions, and bad input of the two commands.
 */
import { execFileSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { azimuthError, mirrorAxisOf, median, quantile } from '../../src/accuracy/score.js';
import { expectUsageFailure, runCli } from '../helpers/cli.js';
import { tempDir } from '../helpers/temp-dir.js';

describe('scoring parts', () => {
  it('median and 90th percentile agree with numpy (median; percentile, method inverted_cdf = nearest rank)', () => {
    const xs = Array.from({ length: 37 }, (_, i) => ((i * 7919) % 101) / 3);
    const sorted = xs.slice().sort((a, b) => a - b);
    const out = execFileSync('python3', ['-c', `import numpy as np, json, sys; x=np.array(json.loads(sys.argv[1])); print(json.dumps([float(np.median(x)), float(np.percentile(x, 90, method="inverted_cdf"))]))`, JSON.stringify(xs)], { encoding: 'utf8' });
    const [med, p90] = JSON.parse(out) as [number, number];
    expect(median(sorted)).toBeCloseTo(med, 12);
    expect(quantile(sorted, 0.9)).toBeCloseTo(p90, 12);
    expect(median(sorted.slice(0, 36))).toBeCloseTo(JSON.parse(execFileSync('python3', ['-c', `import numpy as np, json, sys; print(float(np.median(json.loads(sys.argv[1]))))`, JSON.stringify(sorted.slice(0, 36))], { encoding: 'utf8' })) as number, 12);
  });

  it('angles wrap on the circle (Mardia and Jupp: 350 and 10 degrees are 20 apart) and a pair folds across its axis (references.md: a pair resolves only -90..90, so along any axis only the angle to it)', () => {
    expect(azimuthError(350, 10, null)).toBeCloseTo(20, 12);
    expect(azimuthError(175, -175, null)).toBeCloseTo(10, 12);
    expect(azimuthError(-170, 170, null)).toBeCloseTo(20, 12);
    // the pair of interface.md: axis along x (90 deg), so 120 and 60 look alike, -150 and -30 too
    expect(azimuthError(60, 120, 90)).toBeCloseTo(0, 12);
    expect(azimuthError(-30, -150, 90)).toBeCloseTo(0, 12);
    expect(azimuthError(-25, -150, 90)).toBeCloseTo(5, 12);
    expect(azimuthError(60, 120, null)).toBeCloseTo(60, 12);
    // a pair along y (axis 0): +30 and -30 look alike, 150 and -150 too
    expect(azimuthError(30, -30, 0)).toBeCloseTo(0, 12);
    expect(azimuthError(150, -148, 0)).toBeCloseTo(2, 12);
    expect(azimuthError(30, 150, 0)).toBeCloseTo(120, 12);
    // a pair at 45 deg: 0 and 90 look alike, 180 and -90 too
    expect(azimuthError(0, 90, 45)).toBeCloseTo(0, 12);
    expect(azimuthError(-90, 180, 45)).toBeCloseTo(0, 12);
    // the axis from a record, and from older records that only said 'front-back' (a pair along x)
    expect(mirrorAxisOf({ mirror: 'left-right', mirror_axis_deg: 0 })).toBe(0);
    expect(mirrorAxisOf({ mirror: 'front-back' })).toBe(90);
    expect(mirrorAxisOf({ mirror: 'up-down' })).toBeNull();
  });
});

describe('bad input', () => {
  const dir = tempDir('accuracy').dir;
  it('accuracy: a recording without its truth file, or not a .wav name: exit 2 with one clear line', () => {
    const wav = join(dir, 'lonely.wav');
    writeFileSync(wav, 'not really');
    expectUsageFailure(runCli(['accuracy', wav]), /no truth file .*lonely\.truth\.jsonl: render the recording with bearline simulate/);
    expectUsageFailure(runCli(['accuracy', join(dir, 'x.flac')]), /must be a \.wav file/);
  });
  it('accuracy: a malformed truth line names the file and line', () => {
    const wav = join(dir, 'bad.wav');
    writeFileSync(wav, 'x');
    writeFileSync(join(dir, 'bad.truth.jsonl'), '{"time_s":0,"source":"a","azimuth_deg":1,"elevation_deg":0}\n{"time_s":"soon"}\n');
    expectUsageFailure(runCli(['accuracy', wav, '--spacing', '0.2']), /bad\.truth\.jsonl line 2: has no number "time_s"/);
  });
  it('demo: --array is refused (the scene brings its array)', () => {
    expectUsageFailure(runCli(['demo', '--fast', '--array', 'square-10cm'], { env: { XDG_CACHE_HOME: dir } }), /the demo takes its array from the scene/);
  });
});

/**
 * The scorer's small parts against outside definitions, and bad input of the two commands.
 */
import { execFileSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { azimuthError, foldFront, median, quantile } from '../../src/accuracy/score.js';
import { expectUsageFailure, runCli } from '../helpers/cli.js';
import { tempDir } from './helpers.js';

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

  it('angles wrap on the circle (Mardia and Jupp: 350 and 10 degrees are 20 apart) and a pair folds front to back (references.md: a pair resolves only -90..90)', () => {
    expect(azimuthError(350, 10, null)).toBeCloseTo(20, 12);
    expect(azimuthError(175, -175, null)).toBeCloseTo(10, 12);
    expect(azimuthError(-170, 170, null)).toBeCloseTo(20, 12);
    expect(foldFront(120)).toBeCloseTo(60, 12);
    expect(foldFront(-150)).toBeCloseTo(-30, 12);
    expect(azimuthError(60, 120, 'front-back')).toBeCloseTo(0, 12);
    expect(azimuthError(60, 120, null)).toBeCloseTo(60, 12);
  });
});

describe('bad input', () => {
  const dir = tempDir();
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

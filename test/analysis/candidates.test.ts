/**
 * How many direction candidates the analysis compares per hop (--max-candidates) and how many
 * sources it reports (--max-sources): one home for the candidate limit, which the low-CPU
 * profile lowers (issue 15: the profile's limit used to stop at the tracker). Signals made by
 * sox (an independent tool): three uncorrelated noise sources around a 10 cm square, far-field
 * delays of interface.md by the 10x-rate method of references.md.
 */
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PROFILE_SECTIONS } from '../../src/cli/analysis-flags.js';
import { analyzeArrays, createAnalysis } from '../../src/analysis/analysis.js';
import { resolveAnalysisOptions, type AnalysisOptions } from '../../src/analysis/analysis-options.js';
import { loadGeometryFile } from '../../src/geometry/geometry-file.js';
import { unitFromAzEl } from '../../src/geometry/vec3.js';
import { loadProfile, profileValues } from '../../src/options/profile.js';
import { UsageError } from '../../src/util/errors.js';
import { farFieldDelaysUp, soxDecode, soxDelayedSignal, soxMix } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

const square = loadGeometryFile(fileURLToPath(new URL('../../configs/arrays/square-10cm.json', import.meta.url)));
const profiles = fileURLToPath(new URL('../../configs/profiles/', import.meta.url));
const tmp = tempDir();
afterAll(() => tmp.cleanup());

let mix: { rate: number; channels: Float32Array[] };
beforeAll(() => {
  const positions = square.mics.map((m) => m.position);
  const sources = [30, 150, -90].map((az, i) =>
    soxDelayedSignal(
      { out: `${tmp.dir}/s${i}.wav`, delaysUp: farFieldDelaysUp(positions, unitFromAzEl(az, 0), 343, 480000), durationS: 2 + 3 * i, effects: ['trim', String(3 * i), 'sinc', '300-7000'] },
      tmp.dir,
    ),
  );
  mix = soxDecode(soxMix(`${tmp.dir}/three.wav`, sources.map((path) => ({ path, volume: 1 }))));
});

/** The most sources any hop reports, and the analysis's candidate limit. */
function mostSources(options: AnalysisOptions): { most: number; candidates: number } {
  const setup = createAnalysis(square, mix.rate, 343, options);
  let most = 0;
  analyzeArrays(setup, mix.channels, (r) => {
    most = Math.max(most, r.sourceCount);
  });
  return { most, candidates: setup.options.maxCandidates };
}

describe('the candidate limit has one home, in the analysis', () => {
  it('three sources at once: the default analysis reports three in some hops', () => {
    const r = mostSources({});
    console.log(`default: ${r.candidates} candidates, at most ${r.most} sources in a hop`);
    expect(r.candidates).toBe(4);
    expect(r.most).toBe(3);
  });

  it('the station-low-cpu profile lowers it: its analysis compares 2 candidates and reports at most 2 sources', () => {
    const low = profileValues<AnalysisOptions>(loadProfile('station-low-cpu', profiles, PROFILE_SECTIONS), 'analysis');
    const r = mostSources(low);
    console.log(`station-low-cpu: ${r.candidates} candidates, at most ${r.most} sources in a hop`);
    expect(r.candidates).toBe(2);
    expect(r.most).toBe(2);
  });

  it('--max-sources is at most --max-candidates (a hop reports no more sources than it compares)', () => {
    expect(() => resolveAnalysisOptions({ maxSources: 5 }, 48000)).toThrow(UsageError);
    expect(() => resolveAnalysisOptions({ maxSources: 5 }, 48000)).toThrow(/--max-sources 5 is more than --max-candidates 4/);
    expect(resolveAnalysisOptions({ maxCandidates: 6, maxSources: 5 }, 48000)).toMatchObject({ maxCandidates: 6, maxSources: 5 });
    expect(resolveAnalysisOptions({ maxCandidates: 2 }, 48000).maxSources).toBe(2);
    expect(() => resolveAnalysisOptions({ maxCandidates: 9 }, 48000)).toThrow(/--max-candidates: 9 is out of range; give a whole number from 1 to 8/);
  });
});

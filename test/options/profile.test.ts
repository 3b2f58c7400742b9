/**
 * Run profiles read through the stages' option specs (src/options/profile.ts): keys are the
 * option names, every section and key is checked when the file is read, and the message names
 * the file and the key.
 */
import { readdirSync, writeFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { PROFILE_SECTIONS } from '../../src/cli/analysis-flags.js';
import { loadProfile, profileValues } from '../../src/options/profile.js';
import type { TrackerOptions } from '../../src/track/options.js';
import { UsageError } from '../../src/util/errors.js';
import { tempDir } from '../helpers/temp-dir.js';
import { runCli } from '../helpers/cli.js';

const tmp = tempDir('profiles');
const presets = fileURLToPath(new URL('../../configs/profiles/', import.meta.url));

function load(body: unknown): ReturnType<typeof loadProfile> {
  const path = `${tmp.dir}/p.json`;
  writeFileSync(path, typeof body === 'string' ? body : JSON.stringify(body));
  return loadProfile(path, presets, PROFILE_SECTIONS);
}

describe('run profiles', () => {
  it('reads the option names of every section into the stages\' keys (issue 15: {"tracker": {"bearing-noise": 2}} was refused)', () => {
    const p = load({ about: 'test', analysis: { hop: 256, 'no-voting': true }, tracker: { 'bearing-noise': 2, 'max-tracks': 4 }, log: { 'rotate-size': '32M', 'max-disk': null }, mqtt: { 'mqtt-frames': false }, station: { 'max-restarts': undefined, 'status-every': 0 } });
    expect(p.about).toBe('test');
    expect(profileValues<TrackerOptions>(p, 'tracker')).toEqual({ bearingNoiseDeg: 2, maxTracks: 4 });
    expect(profileValues(p, 'analysis')).toEqual({ hop: 256, voting: false });
    expect(profileValues(p, 'log')).toEqual({ rotateSize: 32 * 1024 ** 2, maxDisk: null });
    expect(profileValues(p, 'station')).toEqual({ statusEvery: 0 });
    expect(profileValues(null, 'tracker')).toEqual({});
  });

  it('finds the shipped presets by name', () => {
    for (const name of ['frog-chorus', 'passing-birds', 'bats', 'bench', 'station-low-cpu']) expect(loadProfile(name, presets, PROFILE_SECTIONS).about).toMatch(/\w/);
  });

  it('--help names every shipped preset (bats was missing from it when it landed)', () => {
    const help = runCli(['scan', '--help']).stdout.replace(/\s+/g, ' ');
    const listed = /presets in configs\/profiles\/: ([^)]*)\)/.exec(help)![1]!.split(', ');
    expect(listed.sort()).toEqual(readdirSync(presets).filter((f) => f.endsWith('.json')).map((f) => f.slice(0, -5)).sort());
  });

  it.each([
    ['a misspelled section', { trakcer: { 'bearing-noise': 2 } }, /"trakcer" is not a known section; known: about, analysis, tracker, station, log, mqtt$/],
    ['an internal name', { tracker: { bearingNoiseDeg: 2 } }, /: tracker\.bearingNoiseDeg is not a known option; known: bearing-noise,/],
    ["another stage's option (min-confidence is the analysis's; the tracker's is track-confidence)", { tracker: { 'min-confidence': 0.5 } }, /tracker\.min-confidence is not a known option/],
    ['a value out of range', { tracker: { gate: 99 } }, /tracker\.gate: 99 is out of range; give a number from 1 to 10 sigma/],
    ['text that is no number', { analysis: { bands: 'many' } }, /analysis\.bands: 'many' is not a number/],
    ['a switch that is not true or false', { analysis: { 'no-voting': 'yes' } }, /analysis\.no-voting: 'yes' is not true or false/],
    ['a bad size', { log: { 'max-disk': 'lots' } }, /log\.max-disk: 'lots' is not a size/],
    ['a section that is no object', { tracker: [1] }, /tracker must be a JSON object of options/],
    ['an "about" that is no text', { about: 3 }, /"about" must be text/],
    ['not an object', [1, 2], /must hold a JSON object/],
    ['not JSON', '{"tracker": ', /JSON/],
  ])('%s is a UsageError naming the file and the key', (_what, body, message) => {
    let err: unknown = null;
    try {
      load(body);
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(UsageError);
    expect((err as Error).message).toMatch(message);
    expect((err as Error).message).toContain(`${tmp.dir}/p.json`);
  });

  it('an unknown preset name says where the presets are', () => {
    expect(() => loadProfile('frog-choir', presets, PROFILE_SECTIONS)).toThrow(/--profile frog-choir: no such profile file or preset \(presets are in .*configs\/profiles\/\)/);
  });
});

import { readdirSync, readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { UsageError } from '../../src/util/errors.js';
import {
  defaultTrackerOptions,
  resolveTrackerOptions,
  trackerOptionSpecs,
  trackerSettingsFromProfile,
  type TrackerOptions,
} from '../../src/track/options.js';
import { Tracker } from '../../src/track/tracker.js';

function usageError(fn: () => unknown): UsageError {
  try {
    fn();
  } catch (err) {
    if (err instanceof UsageError) return err;
    throw err;
  }
  throw new Error('expected a UsageError');
}

describe('tracker options: one home, defaults, validation', () => {
  it('has exactly one spec per option, with unique flags and defaults that resolve', () => {
    const keys = trackerOptionSpecs.map((s) => s.key);
    expect(new Set(keys).size).toBe(keys.length);
    expect(keys.sort()).toEqual(Object.keys(defaultTrackerOptions).sort());
    const flags = trackerOptionSpecs.flatMap((s) => (s.flag === null ? [] : [s.flag.split(' ')[0]]));
    expect(new Set(flags).size).toBe(flags.length);
    for (const f of flags) expect(f).toMatch(/^--[a-z][a-z-]+$/);
    expect(resolveTrackerOptions({})).toEqual(defaultTrackerOptions);
    for (const s of trackerOptionSpecs) expect(s.help.length).toBeGreaterThan(10);
  });

  it('rejects out-of-range, wrong-type and unknown settings, naming the option', () => {
    expect(usageError(() => resolveTrackerOptions({ gateSigma: 0.5 })).message).toMatch(/gateSigma \(--gate\).*from 1 to 10/);
    expect(usageError(() => resolveTrackerOptions({ maxTracks: 17 })).message).toMatch(/maxTracks \(--max-tracks\)/);
    expect(usageError(() => resolveTrackerOptions({ maxTracks: 2.5 })).message).toMatch(/whole number/);
    expect(usageError(() => resolveTrackerOptions({ bearingNoiseDeg: 0 })).message).toMatch(/bearingNoiseDeg.*above 0/);
    expect(usageError(() => resolveTrackerOptions({ maxGapS: Number.NaN })).message).toMatch(/maxGapS/);
    expect(usageError(() => resolveTrackerOptions({ gateSigma: '3' })).message).toMatch(/gateSigma.*must be a number/);
    expect(usageError(() => resolveTrackerOptions({ mirror: 1 })).message).toMatch(/option mirror is derived from the array geometry/);
    expect(usageError(() => resolveTrackerOptions({ mirror: { kind: 'sideways', normal: [1, 0, 0], axisDeg: 0, sideDeg: 90 } })).message).toMatch(/mirror/);
    expect(usageError(() => resolveTrackerOptions({ gatesigma: 3 })).message).toMatch(/unknown option 'gatesigma'/);
  });

  it('rejects inconsistent pairs: leave above enter, M above N, timeout below the gap', () => {
    expect(usageError(() => resolveTrackerOptions({ eventEnterSnrDb: 6, eventLeaveSnrDb: 9 })).message).toMatch(/eventLeaveSnrDb/);
    expect(usageError(() => resolveTrackerOptions({ eventEnterConfidence: 0.2, eventLeaveConfidence: 0.4 })).message).toMatch(/eventLeaveConfidence/);
    expect(usageError(() => resolveTrackerOptions({ confirmHits: 6, confirmWindow: 5 })).message).toMatch(/confirmHits.*M must not exceed N/);
    expect(usageError(() => resolveTrackerOptions({ trackTimeoutS: 0.05, maxGapS: 0.1 })).message).toMatch(/trackTimeoutS/);
    expect(() => new Tracker({ confirmHits: 9, confirmWindow: 4 })).toThrow(UsageError);
  });

  it('parses command-line values through the specs, with a one-line error naming the flag', () => {
    const gate = trackerOptionSpecs.find((s) => s.key === 'gateSigma');
    if (gate === undefined || gate.kind !== 'number') throw new Error('gateSigma spec missing');
    expect(gate.parse('4.5')).toBe(4.5);
    const bad = usageError(() => gate.parse('wide'));
    expect(bad.message).toMatch(/^--gate: 'wide' is not a number; give a number from 1 to 10 sigma\.$/);
    expect(bad.message).not.toContain('\n');
    expect(usageError(() => gate.parse('11')).message).toMatch(/--gate: 11 is out of range/);
    expect(usageError(() => gate.parse('')).message).toMatch(/--gate/);
  });
});

describe('run profiles (configs/profiles/*.json)', () => {
  const dir = new URL('../../configs/profiles/', import.meta.url);
  const files = readdirSync(dir).filter((f) => f.endsWith('.json'));

  it('ships frog-chorus, passing-birds and bench', () => {
    expect(files).toEqual(expect.arrayContaining(['frog-chorus.json', 'passing-birds.json', 'bench.json']));
  });

  it.each(files)('%s has an "about" line and valid tracker settings', (file) => {
    const profile = JSON.parse(readFileSync(new URL(file, dir), 'utf8')) as { about?: unknown };
    expect(typeof profile.about).toBe('string');
    const settings = trackerSettingsFromProfile(profile, file);
    const resolved: TrackerOptions = resolveTrackerOptions(settings, file);
    expect(Object.keys(settings).length).toBeGreaterThan(3);
    for (const [k, v] of Object.entries(settings)) expect(resolved[k as keyof TrackerOptions]).toBe(v);
  });

  it('reports a bad profile with the file and the option', () => {
    expect(usageError(() => trackerSettingsFromProfile({ tracker: { gateSigma: 99 } }, 'mine.json')).message).toMatch(/^mine\.json "tracker": option gateSigma/);
    expect(usageError(() => trackerSettingsFromProfile({ tracker: [] }, 'mine.json')).message).toMatch(/"tracker" must be an object/);
    expect(usageError(() => trackerSettingsFromProfile(3, 'mine.json')).message).toMatch(/mine\.json: a profile must be a JSON object/);
    expect(trackerSettingsFromProfile({ about: 'no tracker part' }, 'mine.json')).toEqual({});
  });
});

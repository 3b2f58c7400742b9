import { readdirSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { PROFILE_SECTIONS } from '../../src/cli/analysis-flags.js';
import { parseOptionText } from '../../src/options/option-spec.js';
import { loadProfile, profileValues } from '../../src/options/profile.js';
import { UsageError } from '../../src/util/errors.js';
import { defaultTrackerOptions, resolveTrackerOptions, trackerOptionSpecs, type TrackerOptions } from '../../src/track/options.js';
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
  it('has exactly one spec per user option, with unique names and defaults that resolve', () => {
    const keys = trackerOptionSpecs.map((s) => s.key);
    expect(new Set(keys).size).toBe(keys.length);
    // every field is a user option except the two the program sets (mirror from the geometry, candidates from the analysis)
    expect([...keys, 'mirror', 'maxCandidates'].sort()).toEqual(Object.keys(defaultTrackerOptions).sort());
    const names = trackerOptionSpecs.map((s) => s.name);
    expect(new Set(names).size).toBe(names.length);
    for (const n of names) expect(n).toMatch(/^[a-z][a-z-]+$/);
    expect(resolveTrackerOptions({})).toEqual(defaultTrackerOptions);
    for (const s of trackerOptionSpecs) expect(s.help.length).toBeGreaterThan(10);
  });

  it('rejects out-of-range, wrong-type and unknown settings, naming the option', () => {
    const loose = (o: Record<string, unknown>): Partial<TrackerOptions> => o as Partial<TrackerOptions>;
    expect(usageError(() => resolveTrackerOptions({ gateSigma: 0.5 })).message).toMatch(/--gate: 0\.5 is out of range; give a number from 1 to 10 sigma/);
    expect(usageError(() => resolveTrackerOptions({ maxTracks: 17 })).message).toMatch(/--max-tracks/);
    expect(usageError(() => resolveTrackerOptions({ maxTracks: 2.5 })).message).toMatch(/whole number/);
    expect(usageError(() => resolveTrackerOptions({ bearingNoiseDeg: 0 })).message).toMatch(/--bearing-noise.*above 0/);
    expect(usageError(() => resolveTrackerOptions({ maxGapS: Number.NaN })).message).toMatch(/--max-gap/);
    expect(usageError(() => resolveTrackerOptions(loose({ gateSigma: '3' }))).message).toMatch(/--gate: '3' is not a number/);
    expect(usageError(() => resolveTrackerOptions(loose({ mirror: 1 }))).message).toMatch(/mirror is derived from the array geometry/);
    expect(usageError(() => resolveTrackerOptions(loose({ mirror: { kind: 'sideways', normal: [1, 0, 0], axisDeg: 0, sideDeg: 90 } }))).message).toMatch(/mirror/);
    expect(usageError(() => resolveTrackerOptions(loose({ gatesigma: 3 }))).message).toMatch(/unknown option 'gatesigma'/);
    expect(usageError(() => resolveTrackerOptions({ maxCandidates: 9 })).message).toMatch(/maxCandidates 9/);
  });

  it('rejects inconsistent pairs: leave above enter, M above N, timeout below the gap', () => {
    expect(usageError(() => resolveTrackerOptions({ eventEnterSnrDb: 6, eventLeaveSnrDb: 9 })).message).toMatch(/--event-leave-snr 9 against --event-enter-snr 6/);
    expect(usageError(() => resolveTrackerOptions({ eventEnterConfidence: 0.2, eventLeaveConfidence: 0.4 })).message).toMatch(/--event-leave-confidence/);
    expect(usageError(() => resolveTrackerOptions({ confirmHits: 6, confirmWindow: 5 })).message).toMatch(/--confirm-hits 6 against --confirm-window 5: M must not exceed N/);
    expect(usageError(() => resolveTrackerOptions({ trackTimeoutS: 0.05, maxGapS: 0.1 })).message).toMatch(/--track-timeout/);
    expect(() => new Tracker({ confirmHits: 9, confirmWindow: 4 })).toThrow(UsageError);
  });

  it('parses command-line values through the specs, with a one-line error naming the flag', () => {
    const gate = trackerOptionSpecs.find((s) => s.key === 'gateSigma')!;
    expect(parseOptionText(gate, '4.5')).toBe(4.5);
    const bad = usageError(() => parseOptionText(gate, 'wide'));
    expect(bad.message).toMatch(/^--gate: 'wide' is not a number; give a number from 1 to 10 sigma\.$/);
    expect(bad.message).not.toContain('\n');
    expect(usageError(() => parseOptionText(gate, '11')).message).toMatch(/--gate: 11 is out of range/);
    expect(usageError(() => parseOptionText(gate, '')).message).toMatch(/--gate/);
  });
});

describe('run profiles (configs/profiles/*.json): the tracker section', () => {
  const dir = fileURLToPath(new URL('../../configs/profiles/', import.meta.url));
  const files = readdirSync(dir).filter((f) => f.endsWith('.json'));

  it('ships frog-chorus, passing-birds, bats, bench and station-low-cpu', () => {
    expect(files).toEqual(expect.arrayContaining(['frog-chorus.json', 'passing-birds.json', 'bats.json', 'bench.json', 'station-low-cpu.json']));
  });

  it.each(files)('%s has an "about" line and valid tracker settings under the option names', (file) => {
    const profile = loadProfile(`${dir}${file}`, dir, PROFILE_SECTIONS);
    expect(typeof profile.about).toBe('string');
    const settings = profileValues<TrackerOptions>(profile, 'tracker');
    const resolved: TrackerOptions = resolveTrackerOptions(settings, file);
    expect(Object.keys(settings).length).toBeGreaterThan(3);
    for (const [k, v] of Object.entries(settings)) expect(resolved[k as keyof TrackerOptions]).toBe(v);
  });
});

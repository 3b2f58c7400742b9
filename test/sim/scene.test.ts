import { describe, expect, it } from 'vitest';
import { UsageError } from '../../src/util/errors.js';
import { sceneFrom } from './helpers.js';

// Validation of our own scene format: every error is a UsageError (exit 2) that names the field.
const GOOD = {
  sample_rate_hz: 16000,
  duration_s: 2,
  array: { geometry: 'square-20cm', position_m: [0, 0, 1] },
  sources: [{ name: 'frog', position_m: [3, 4, 0], signal: { type: 'tone', f0_hz: 500, harmonics: [1, 0.5] }, level: { db_spl_at_1m: 80 } }],
};

type Patch = (s: Record<string, any>) => void;

function errorOf(patch: Patch): string {
  const scene = structuredClone(GOOD) as Record<string, any>;
  patch(scene);
  try {
    sceneFrom(scene);
  } catch (err) {
    expect(err).toBeInstanceOf(UsageError);
    return (err as Error).message;
  }
  throw new Error('scene was accepted');
}

const CASES: [string, Patch, RegExp][] = [
  ['missing sample rate', (s) => delete s.sample_rate_hz, /sample_rate_hz is missing/],
  ['unknown top-level field', (s) => (s.duraton_s = 3), /duraton_s is not a known field/],
  ['negative duration', (s) => (s.duration_s = -1), /duration_s must be greater than 0/],
  ['unknown array preset', (s) => (s.array.geometry = 'hexagon-9m'), /array\.geometry "hexagon-9m" is not an array preset/],
  ['array position not a 3-vector', (s) => (s.array.position_m = [0, 0]), /array\.position_m must be \[east, north, up\]/],
  ['unknown signal type', (s) => (s.sources[0].signal.type = 'croak'), /sources\[0\]\.signal\.type must be one of noise, tone, sweep, wav/],
  ['field of another signal type', (s) => (s.sources[0].signal.start_hz = 100), /sources\[0\]\.signal\.start_hz is not a known field/],
  ['harmonics above 0.45 fs', (s) => (s.sources[0].signal.harmonics = [1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1]), /sources\[0\]\.signal\.harmonics reach 15 x 500 Hz/],
  ['both position and path', (s) => (s.sources[0].path = []), /sources\[0\]\.position_m or "path" must be given, not both/],
  [
    'path times not increasing',
    (s) => {
      delete s.sources[0].position_m;
      s.sources[0].path = [
        { time_s: 1, position_m: [3, 4, 0] },
        { time_s: 1, position_m: [5, 4, 0] },
      ];
    },
    /sources\[0\]\.path\[1\]\.time_s must be later/,
  ],
  ['no level', (s) => (s.sources[0].level = {}), /sources\[0\]\.level\.db_spl_at_1m or "dbfs_at_array" must be given/],
  ['jitter over the interval', (s) => (s.sources[0].calls = { length_s: 0.2, every_s: 0.5, jitter_s: 0.6 }), /sources\[0\]\.calls\.jitter_s must be less than every_s/],
  ['source on a mic', (s) => (s.sources[0].position_m = [0.1, 0.1, 1]), /sources\[0\]\.position_m puts source "frog" within 0.1 m of a microphone/],
  ['two sources with one name', (s) => s.sources.push(structuredClone(s.sources[0])), /sources\[1\]\.name "frog" is used twice/],
  ['source outside the room', (s) => (s.room = { size_m: [4, 4, 3], absorption: 0.3 }), /sources\[0\]\.position_m puts source "frog" outside the room/],
  ['absorption and rt60 together', (s) => (s.room = { size_m: [8, 8, 3], absorption: 0.3, rt60_s: 0.5 }), /room\.absorption or "rt60_s" must be given, one of them/],
  ['RT60 too short for the room', (s) => (s.room = { size_m: [8, 8, 3], rt60_s: 0.01 }), /room\.rt60_s of 0.01 s is too short/],
  ['absorption out of range', (s) => (s.room = { size_m: [8, 8, 3], absorption: { west: 0.2, east: 0.2, south: 0.2, north: 0.2, floor: 1.5, ceiling: 0.2 } }), /room\.absorption\.floor must be at most 1/],
  ['noise with nothing to add', (s) => (s.noise = { wind_lowpass_hz: 200 }), /noise\.wind_dbfs or "floor_dbfs" must be given/],
  ['a ramp longer than half the call', (s) => (s.sources[0].calls = { length_s: 0.004, ramp_s: 0.005 }), /sources\[0\]\.calls\.ramp_s 0.005 s must be at most half of length_s \(0.004 s\); give a shorter ramp_s or leave it out/],
  ['speed of sound and temperature', (s) => ((s.speed_of_sound_m_s = 340), (s.temperature_c = 20)), /speed_of_sound_m_s and "temperature_c" cannot both be given/],
];

describe('scene validation (errors name the field)', () => {
  it('accepts the reference scene', () => {
    const scene = sceneFrom(GOOD);
    expect(scene.sources[0]!.name).toBe('frog');
    expect(scene.speedOfSound).toBe(343); // interface.md default
  });
  for (const [what, patch, message] of CASES) {
    it(`rejects: ${what}`, () => {
      expect(errorOf(patch)).toMatch(message);
    });
  }
  it('calls fade over 5 ms unless shorter than 20 ms (then a quarter of the call: a bat\'s 4 ms call needs no ramp_s)', () => {
    const ramp = (calls: object) => sceneFrom({ ...GOOD, sources: [{ ...GOOD.sources[0], calls }] }).sources[0]!.schedule.rampS;
    expect(ramp({ length_s: 0.2 })).toBe(0.005);
    expect(ramp({ length_s: 0.004 })).toBeCloseTo(0.001, 12);
    expect(ramp({ length_s: 0.004, ramp_s: 0.002 })).toBe(0.002);
  });
  it('temperature_c sets c = 331.3 sqrt(1 + T / 273.15) (CRC Handbook: 343.2 m/s at 20 C)', () => {
    const scene = sceneFrom({ ...GOOD, temperature_c: 20 });
    expect(scene.speedOfSound).toBeCloseTo(343.2, 1);
  });
});

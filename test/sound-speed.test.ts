import { describe, expect, it } from 'vitest';
import { resolveSpeedOfSound, speedOfSoundAt } from '../src/geometry/sound-speed.js';

// Handbook values (CRC Handbook of Chemistry and Physics, via ../shared/references.md):
// 331.3 m/s at 0 C, 343.2 m/s at 20 C, 349.0 m/s at 30 C.
describe('speed of sound (CRC handbook values)', () => {
  it.each([
    [0, 331.3],
    [20, 343.2],
    [30, 349.0],
  ])('at %d C is %f m/s', (t, c) => {
    expect(speedOfSoundAt(t)).toBeCloseTo(c, 1);
  });

  it('defaults to 343 m/s and honours --speed-of-sound (interface.md)', () => {
    expect(resolveSpeedOfSound({})).toBe(343);
    expect(resolveSpeedOfSound({ speedOfSound: 340 })).toBe(340);
    expect(resolveSpeedOfSound({ temperature: 20 })).toBeCloseTo(343.2, 1);
  });

  it('rejects both at once and absurd values', () => {
    expect(() => resolveSpeedOfSound({ speedOfSound: 340, temperature: 20 })).toThrow(/not both/);
    expect(() => resolveSpeedOfSound({ speedOfSound: 3 })).toThrow(/out of range/);
    expect(() => speedOfSoundAt(500)).toThrow(/out of range/);
  });
});

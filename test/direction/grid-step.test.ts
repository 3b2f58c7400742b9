import { describe, expect, it } from 'vitest';
import { autoStepDeg } from '../../src/direction/srp-search.js';

/**
 * The direction grid's step (autoStepDeg): neighbouring grid points differ by at most 1.4 samples
 * of the largest lag and, above the audio band, by at most 0.35 of the period of the highest
 * analysed frequency. The
 * correlation of a band-limited call oscillates at about that period (common practice: the
 * correlation of a band-pass signal is its envelope times a carrier at the band's centre).
 */
const DEG = 180 / Math.PI;

describe('the direction grid step', () => {
  it('audio at 48 kHz up to 12 kHz: 1.4 samples of lag per step, at least 2.5 deg (the rule the audio defaults were chosen with)', () => {
    // A 10 cm tetrahedron at 48 kHz: largest lag searched 17 samples.
    expect(autoStepDeg('solid', 17, 48000, 12000)).toBeCloseTo((1.4 / 17) * DEG, 9);
    // A 20 cm square: 45 samples, under the 2.5 deg floor.
    expect(autoStepDeg('plane', 45, 48000, 12000)).toBe(2.5);
    // Short lags: at most 8 deg (3 for a line).
    expect(autoStepDeg('solid', 5, 48000, 12000)).toBe(8);
    expect(autoStepDeg('line', 5, 48000, 12000)).toBe(3);
  });
  it('ultrasound at 192 kHz up to 90 kHz: the step follows the period (2.13 samples): about 0.77 deg for a 10 cm tetrahedron (56 samples)', () => {
    const period = 192000 / 90000;
    const step = autoStepDeg('solid', 56, 192000, 90000);
    expect(step).toBeCloseTo(((0.35 * period) / 56) * DEG, 9);
    expect(step).toBeLessThan(0.8);
    // Neighbouring points then differ by 0.35 of the top period, not 2.4 samples (over a period).
    expect((step / DEG) * 56).toBeCloseTo(0.35 * period, 9);
  });
  it('ultrasound at 384 kHz up to 120 kHz: no 2.5 deg floor there (0.57 deg for 112 samples)', () => {
    const period = 384000 / 120000;
    expect(autoStepDeg('solid', 112, 384000, 120000)).toBeCloseTo(((0.35 * period) / 112) * DEG, 9);
  });
  it('16 kHz up to 7.6 kHz (the cap below Nyquist): audio, so 1.4 samples per step as before, though the period is 2.1 samples', () => {
    expect(autoStepDeg('plane', 16, 16000, 7600)).toBeCloseTo((1.4 / 16) * DEG, 9);
  });
});

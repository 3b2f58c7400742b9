import { describe, expect, it } from 'vitest';
import { AnalysisMeter, formatRealTimeFactor } from '../../src/analysis/analysis-meter.js';

// The real-time factor is audio time over processing time (common practice, no source).
describe('analysis meter', () => {
  it('10 hops of 512 samples at 48 kHz, 0.1 ms each: 0.1067 s of audio in 1 ms is 107x real time', () => {
    let now = 1000;
    const meter = new AnalysisMeter(512 / 48000, () => now);
    expect(meter.realTimeFactor()).toBeNull();
    for (let i = 0; i < 10; i++) {
      const t0 = meter.start();
      now += 0.1;
      meter.stop(t0);
      now += 5; // time between hops (waiting for audio) does not count
    }
    expect(meter.audioS).toBeCloseTo(10 * (512 / 48000), 12);
    expect(meter.busyMs).toBeCloseTo(1, 9);
    expect(meter.realTimeFactor()).toBeCloseTo(106.6667, 3);
    expect(formatRealTimeFactor(meter.realTimeFactor())).toBe('107x real time');
    expect(formatRealTimeFactor(2.345)).toBe('2.3x real time');
    expect(formatRealTimeFactor(null)).toBeNull();
  });
});

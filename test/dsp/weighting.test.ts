import { afterAll, describe, expect, it } from 'vitest';
import { pairAzimuthDeg } from '../../src/direction/pair-direction.js';
import { pairGeometry } from '../../src/geometry/array-geometry.js';
import type { AnalysisOptions } from '../../src/analysis/analysis-options.js';
import { analyzeArrays, createAnalysis } from '../../src/analysis/analysis.js';
import { soxDecode, soxDelayedSignal, soxMix } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

// Signals made by sox (independent tool). Delays in samples at 480 kHz (10x 48 kHz), as in
// ../shared/references.md. Azimuths from the far-field pair formula of interface.md.
const tmp = tempDir();
afterAll(() => tmp.cleanup());
const UP_RATE = 480000;
const az = (delayUp: number) => pairAzimuthDeg(delayUp / UP_RATE, 0.2, 343);

function shareNear(path: string, opts: AnalysisOptions, truthDeg: number): number {
  const { rate, channels } = soxDecode(path);
  const setup = createAnalysis(pairGeometry(0.2), rate, 343, opts);
  let n = 0;
  let near = 0;
  analyzeArrays(setup, channels, (r) => {
    if (!r.valid) return;
    n++;
    if (Math.abs(r.sources[0]!.azimuthDeg - truthDeg) < 5) near++;
  });
  return near / Math.max(1, n);
}

describe('band voting: an interferer that fills few bands cannot win alone', () => {
  it('a broadband call (200-4000 Hz) against band-limited hiss (4.5-14 kHz) from elsewhere', () => {
    // The hiss covers more FFT bins than the call but only two of the eight log-spaced bands:
    // the plain GCC-PHAT peak (sum over bins) follows the hiss, the band vote the call.
    const call = soxDelayedSignal({ out: `${tmp.dir}/call.wav`, delaysUp: [0, 150], effects: ['sinc', '200-4000'], durationS: 2 }, tmp.dir);
    const hiss = soxDelayedSignal({ out: `${tmp.dir}/hiss.wav`, delaysUp: [200, 0], effects: ['sinc', '4500-14000'], durationS: 2 }, tmp.dir);
    const mix = soxMix(`${tmp.dir}/call+hiss.wav`, [{ path: call, volume: 1 }, { path: hiss, volume: 1 }]);
    const plainOnCall = shareNear(mix, { voting: false }, az(150));
    const plainOnHiss = shareNear(mix, { voting: false }, az(-200));
    const votedOnCall = shareNear(mix, {}, az(150));
    expect(plainOnHiss).toBeGreaterThan(0.9);
    expect(plainOnCall).toBeLessThan(0.1);
    expect(votedOnCall).toBeGreaterThan(0.7);
  });
});

describe('onset weighting: the direct path arrives first (precedence; references.md)', () => {
  it('noise bursts with a louder reflection from another direction 15 ms later', () => {
    // Direct path from one side, a reflection 1.3x as strong (direct partly shadowed) from the
    // other, 15 ms later (7200 samples at 480 kHz). Without onset weighting the reflection
    // wins most hops; with it the estimate holds to the direct path.
    const bursts = (name: string, delays: number[]) =>
      soxDelayedSignal(
        { out: `${tmp.dir}/${name}.wav`, delaysUp: delays, synth: ['whitenoise'], effects: ['pad', '0', '0.32', 'repeat', '9', 'sinc', '200-10000'], durationS: 0.08 },
        tmp.dir,
      );
    const direct = bursts('direct', [0, 200]);
    const echo = bursts('echo', [7200 + 180, 7200]);
    const mix = soxMix(`${tmp.dir}/direct+echo.wav`, [{ path: direct, volume: 1 }, { path: echo, volume: 1.3 }]);
    const plain = { onsetWeight: 0, memoryS: 0 };
    expect(shareNear(mix, plain, az(-180))).toBeGreaterThan(0.6);
    expect(shareNear(mix, plain, az(200))).toBeLessThan(0.3);
    expect(shareNear(mix, {}, az(200))).toBeGreaterThan(0.85);
  });
});

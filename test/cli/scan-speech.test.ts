import { execFileSync } from 'node:child_process';
import { afterAll, describe, expect, it } from 'vitest';
import { pairAzimuthDeg } from '../../src/direction/pair-direction.js';
import { runCli } from '../helpers/cli.js';
import { soxDelayedSignal, soxIndependentNoise, soxMix } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

// Real speech (espeak-ng, an independent speech synthesiser) as a non-stationary source: many
// onsets, pauses, voiced and unvoiced stretches. Delays by sox (10x rate, whole-sample delay,
// resample; references.md); truth from the far-field pair formula of interface.md.
const tmp = tempDir();
afterAll(() => tmp.cleanup());

describe('scan on speech (espeak-ng) from a known direction', () => {
  it('every event points at the talker within 2 degrees', () => {
    const speech = `${tmp.dir}/speech.wav`;
    try {
      execFileSync('espeak-ng', ['-w', speech, 'Station four, north pond. Two frogs calling from the reeds, one bird passing to the east.']);
    } catch (err) {
      throw new Error(`espeak-ng failed (apt-get install -y espeak-ng): ${(err as Error).message}`);
    }
    const delay = 180; // samples at 480 kHz: channel 0 later, so the talker is on the right
    const pair = soxDelayedSignal({ out: `${tmp.dir}/talker.wav`, delaysUp: [delay, 0], sourceFile: speech, effects: ['pad', '0.3', '0.5'], gainDb: -3 }, tmp.dir);
    const noise = soxIndependentNoise(`${tmp.dir}/self-noise.wav`, 2, 8, -55, tmp.dir);
    const mix = soxMix(`${tmp.dir}/talker+noise.wav`, [{ path: pair, volume: 1 }, { path: noise, volume: 1 }]);
    const truth = pairAzimuthDeg(-delay / 480000, 0.2, 343);
    const r = runCli(['scan', mix, '--spacing', '0.2']);
    expect(r.status, r.stderr).toBe(0);
    const events = r.stdout.trim().split('\n').filter(Boolean).map((l) => JSON.parse(l));
    expect(events.length).toBeGreaterThanOrEqual(3);
    for (const e of events) expect(Math.abs(e.azimuth_deg - truth)).toBeLessThan(2);
    expect(new Set(events.map((e) => e.track)).size).toBe(1);
  });
});

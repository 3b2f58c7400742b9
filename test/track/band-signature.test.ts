import { afterAll, describe, expect, it } from 'vitest';
import { loadGeometryFile } from '../../src/geometry/geometry-file.js';
import { unitFromAzEl, wrapDeg } from '../../src/geometry/vec3.js';
import { analyzeArrays, createAnalysis } from '../../src/analysis/analysis.js';
import { Tracker } from '../../src/track/tracker.js';
import type { DirectionCandidate } from '../../src/track/types.js';
import { farFieldDelaysUp, soxDecode, soxDelayedSignal, soxIndependentNoise, soxMix } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

// A caller in another band is another caller, however near its bearing (the tracker's
// BAND_APART_OCT, src/track/tracker.ts). Signals made by sox (independent tool) with the
// far-field per-mic delays of interface.md (common practice: tdoa = (p_a - p_b).u / c); the
// analysis and the tracker run as in `scan`.
const tmp = tempDir();
afterAll(() => tmp.cleanup());
const square = loadGeometryFile('configs/arrays/square-10cm.json');
const positions = square.mics.map((m) => m.position);
const delaysFor = (az: number) => farFieldDelaysUp(positions, unitFromAzEl(az, 0), 343, 480000);

/** A harmonic caller at `az`: each partial made by sox with the same delays, then mixed. */
function caller(name: string, az: number, partials: number[], lengthS: number, effects: string[]): string {
  const parts = partials.map((hz, i) => ({
    path: soxDelayedSignal({ out: `${tmp.dir}/${name}${i}.wav`, delaysUp: delaysFor(az), synth: ['sine', String(hz)], durationS: lengthS, effects: ['fade', 'h', '0.01', String(lengthS), '0.01', ...effects] }, tmp.dir),
    volume: 1 / (i + 1),
  }));
  return soxMix(`${tmp.dir}/${name}.wav`, parts);
}

describe('a caller in another band near a chorus bearing', () => {
  // A chorus at 40 deg: 0.25 s calls of 1, 2 and 3 kHz every second from 0.3 s (12 calls). A low
  // caller 4 deg beside it (300 and 600 Hz, about 2 octaves lower): 0.1 s calls every second from
  // 4.75 s (7 calls), in the chorus' pauses, after the chorus track has settled at its home.
  const chorusAt = (t: number) => t % 1 >= 0.3 && t % 1 < 0.55;
  const lowAt = (t: number) => t >= 4.7 && t % 1 >= 0.75 && t % 1 < 0.85;
  const chorus = caller('chorus', 40, [1000, 2000, 3000], 0.25, ['pad', '0.3', '0.45', 'repeat', '11']);
  const low = caller('low', 44, [300, 600], 0.1, ['pad', '0.75', '0.15', 'repeat', '6', 'pad', '4', '0']);
  // Each mic's own noise 50 dB under the calls (a quiet night's floor): without it the bands no
  // call fills would have no floor to stand out from.
  const noise = soxIndependentNoise(`${tmp.dir}/noise.wav`, 4, 12, -56, tmp.dir);
  const { rate, channels } = soxDecode(soxMix(`${tmp.dir}/all.wav`, [{ path: chorus, volume: 1 }, { path: low, volume: 1 }, { path: noise, volume: 1 }]));

  /** Track ids per hop of each caller (time inside its calls, direction within 5 deg of it), with or without the candidates' centre frequency. */
  function track(withCentre: boolean) {
    const setup = createAnalysis(square, rate, 343, {});
    const tracker = new Tracker({ mirror: setup.model.mirror, maxCandidates: setup.options.maxSources });
    const ids = { chorus: [] as (number | null)[], low: [] as (number | null)[] };
    const events: { track: number; az: number; start: number }[] = [];
    analyzeArrays(setup, channels, (r) => {
      const candidates: DirectionCandidate[] = r.sources.slice(0, r.sourceCount).map((s) => ({ azimuthDeg: s.azimuthDeg, elevationDeg: s.elevationDeg, score: s.score, ...(withCentre ? { centreHz: s.centreHz } : {}) }));
      const up = tracker.update({ timeS: r.timeS, levelDbfs: r.levelDbfs, snrDb: r.snrDb, onset: r.onset, confidence: r.confidence, candidates });
      for (const e of up.events) events.push({ track: e.track, az: e.azimuth_deg, start: e.start_s });
      candidates.forEach((c, i) => {
        if (chorusAt(r.timeS) && Math.abs(wrapDeg(c.azimuthDeg - 40)) < 5) ids.chorus.push(up.trackIds[i] ?? null);
        if (lowAt(r.timeS) && Math.abs(wrapDeg(c.azimuthDeg - 44)) < 5) ids.low.push(up.trackIds[i] ?? null);
      });
    });
    for (const e of tracker.finish()) events.push({ track: e.track, az: e.azimuth_deg, start: e.start_s });
    const count = new Map<number, number>();
    for (const id of ids.chorus) if (id !== null) count.set(id, (count.get(id) ?? 0) + 1);
    const chorusId = [...count.entries()].sort((a, b) => b[1] - a[1])[0]?.[0] ?? null;
    const lowOnChorus = ids.low.filter((id) => id === chorusId).length / Math.max(1, ids.low.length);
    const lowOwn = ids.low.filter((id) => id !== null && id !== chorusId).length / Math.max(1, ids.low.length);
    const lowEvents = events.filter((e) => e.track !== chorusId && lowAt(e.start + 0.02) && Math.abs(wrapDeg(e.az - 44)) < 5).length;
    return { chorusId, chorusHops: ids.chorus.length, lowHops: ids.low.length, lowOnChorus, lowOwn, lowEvents };
  }

  it('gets a track of its own: none of its hops on the chorus track, an event for most of its 7 calls', () => {
    const r = track(true);
    console.log(`with centre frequencies: chorus track ${r.chorusId} (${r.chorusHops} hops); low caller ${r.lowHops} hops, ${(100 * r.lowOnChorus).toFixed(0)} % on the chorus track, ${(100 * r.lowOwn).toFixed(0)} % on its own, ${r.lowEvents} events of its own`);
    expect(r.chorusId).not.toBeNull();
    expect(r.lowHops).toBeGreaterThan(20);
    expect(r.lowOnChorus).toBeLessThan(0.1);
    expect(r.lowOwn).toBeGreaterThan(0.6);
    expect(r.lowEvents).toBeGreaterThanOrEqual(4);
  });

  it('without the centre frequencies its calls feed the chorus track (the check above can fail)', () => {
    const r = track(false);
    console.log(`without centre frequencies: low caller ${(100 * r.lowOnChorus).toFixed(0)} % on the chorus track, ${r.lowEvents} events of its own`);
    expect(r.lowOnChorus).toBeGreaterThan(0.5);
  });
});

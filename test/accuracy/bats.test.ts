/**
 * Bats flying past, with the bats profile (configs/profiles/bats.json): ultrasonic calls of a few
 * milliseconds at 192 kHz on a 10 cm tetrahedron.
 *
 * One bat rendered by numpy (numpy_bat.py: plane-wave delays applied per sample by windowed-sinc
 * interpolation, so that bearline's simulator is not its own judge), scored against its path
 * azimuth(t) = AZ0 + RATE t; two bats rendered by bearline's simulator, scored by track purity
 * and completeness (as used in multi-target tracking evaluation, common practice) against its
 * truth. Before the direction grid followed the highest analysed frequency
 * (src/direction/srp-search.ts, autoStepDeg) the numpy bat's events were up to 6.8 deg off
 * (p90 4.8 deg; the grid stepped 2.4 samples of lag between points, more than a period of the
 * calls' top frequency), and before the bats profile the defaults analysed up to 12 kHz and
 * reported no event shorter than 40 ms: nothing at all.
 */
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { scoreTracks } from '../../src/accuracy/track-scores.js';
import { indexTruth, parseTruth, TRUTH_STEP_S } from '../../src/accuracy/truth.js';
import { angleDiffDeg } from '../../src/track/circular.js';
import { tempDir } from '../helpers/temp-dir.js';
import { render, scanEvents, scanWithWarnings } from './helpers.js';

const PROFILE = ['--profile', 'bats'];

describe('a bat passing at 40 deg/s, rendered independently with numpy (192 kHz, 70-30 kHz calls of 5 ms every 80 ms)', () => {
  const AZ0 = -60;
  const RATE = 40;
  const wav = join(tempDir('accuracy').dir, 'numpy-bat.wav');
  const made = spawnSync('python3', [join(__dirname, 'numpy_bat.py'), wav, String(AZ0), String(RATE), '3'], { encoding: 'utf8' });
  if (made.status !== 0) throw new Error(`numpy_bat.py failed: ${made.stderr}`);
  const calls = JSON.parse(made.stdout) as [number, number][];

  it('one track; an event for nearly every call, each within 1 deg of the path (measured: 36 of 36 calls, largest error 0.09 deg)', () => {
    const events = scanEvents(wav, ...PROFILE);
    expect(new Set(events.map((e) => e.track)).size).toBe(1);
    const found = calls.filter(([s, e]) => events.some((ev) => ev.start_s < e + 0.006 && ev.end_s > s - 0.006));
    expect(found.length).toBeGreaterThanOrEqual(calls.length - 2);
    const errors = events.map((e) => Math.abs(angleDiffDeg(e.azimuth_deg!, AZ0 + RATE * ((e.start_s + e.end_s) / 2))));
    console.log(`numpy bat: ${events.length} events for ${calls.length} calls; largest error ${Math.max(...errors).toFixed(2)} deg`);
    expect(Math.max(...errors)).toBeLessThan(1);
  });

  it("each event's rate is its track's: within 2 deg/s of the bat's 40 from the sixth call on (the track's rate settles over the first five: 0, 17, 29, 35, 38; the events' own slopes over two hops read -3.5 to 8.2 with the 0.15 s memory)", () => {
    const events = scanEvents(wav, ...PROFILE);
    const rates = events.slice(5).map((e) => e.rate_deg_s!);
    console.log(`numpy bat: event rates ${Math.min(...rates).toFixed(1)} to ${Math.max(...rates).toFixed(1)} deg/s (true ${RATE})`);
    for (const r of rates) expect(Math.abs(r - RATE)).toBeLessThan(2);
    for (const e of events) {
      expect(Math.abs(angleDiffDeg(e.start_azimuth_deg!, AZ0 + RATE * e.start_s))).toBeLessThan(1);
      expect(Math.abs(angleDiffDeg(e.end_azimuth_deg!, AZ0 + RATE * e.end_s))).toBeLessThan(1);
    }
  });

  // Without the profile nothing is written; the scan says why, and what to do, on stderr.
  it.each([
    ['the defaults (the analysis stops at 12 kHz)', [], /no event was written; the analysis stops at 12 kHz \(--max-freq\) of this 192 kHz recording: for ultrasonic callers \(bats\) use --profile bats/],
    ['the band given, the default frame of 4096 (two hops per call: no track confirmed)', ['--min-freq', '20000', '--max-freq', '90000'], /no event was written, but \d+ hops had a confident direction: calls too short to confirm a track .* use --profile bats/],
    ['the band, a frame of 2048 and tracks confirmed on two hops (calls under --min-event)', ['--min-freq', '20000', '--max-freq', '90000', '--frame', '2048', '--hop', '1024', '--confirm-hits', '2'], /no event was written, but \d+ calls on confirmed tracks were shorter than --min-event \(0.04 s\) and dropped; for calls of a few milliseconds \(bats\) use --profile bats/],
  ] as const)('without the profile, %s: no event, and stderr says why', (_, args, message) => {
    const { events, stderr } = scanWithWarnings(wav, ...args);
    expect(events).toHaveLength(0);
    expect(stderr).toMatch(message);
  });

  it('with the profile no such warning', () => {
    expect(scanWithWarnings(wav, ...PROFILE).stderr).not.toMatch(/no event was written/);
  });
});

describe("two bats on crossing paths, rendered by bearline's simulator (192 kHz)", () => {
  // Calls shorter than the truth's 10 ms step are in the truth only where a step falls inside
  // them (about half of them); the scores count those calls.
  const scene = {
    sample_rate_hz: 192000,
    duration_s: 4,
    seed: 9,
    temperature_c: 12,
    array: { geometry: 'tetrahedron-10cm', position_m: [0, 0, 1.5] },
    sources: [
      {
        name: 'bat-a',
        path: [
          { time_s: 0, position_m: [-12, 5, 5] },
          { time_s: 4, position_m: [14, 7, 4] },
        ],
        signal: { type: 'sweep', start_hz: 75000, end_hz: 35000, shape: 'exponential' },
        level: { dbfs_at_array: -32 },
        calls: { start_s: 0.05, length_s: 0.004, every_s: 0.08, jitter_s: 0.01 },
      },
      {
        name: 'bat-b',
        path: [
          { time_s: 0, position_m: [10, -3, 3] },
          { time_s: 4, position_m: [-6, 9, 6] },
        ],
        signal: { type: 'sweep', start_hz: 50000, end_hz: 22000, shape: 'exponential' },
        level: { dbfs_at_array: -36 },
        calls: { start_s: 0.09, length_s: 0.007, every_s: 0.11, jitter_s: 0.015 },
      },
    ],
    noise: { floor_dbfs: -62 },
  };
  const wav = render(tempDir('accuracy').dir, 'two-bats', scene);

  it('a track per bat: purity >= 95 %, completeness >= 85 %, no id switch (measured: 100 % pure; 100 and 100 % complete)', () => {
    const events = scanEvents(wav, ...PROFILE, '--temperature', '12');
    const truth = indexTruth(parseTruth(readFileSync(wav.replace(/\.wav$/, '.truth.jsonl'), 'utf8'), 'two-bats'));
    const scores = scoreTracks(events, truth, TRUTH_STEP_S, 5);
    console.log(`two bats: ${scores.sources.map((s) => `${s.source} ${(100 * s.completeness).toFixed(0)} % complete on track ${s.track} (${(100 * scores.tracks.find((t) => t.track === s.track)!.purity).toFixed(0)} % pure)`).join(', ')}`);
    for (const s of scores.sources) {
      expect(s.completeness).toBeGreaterThanOrEqual(0.85);
      expect(s.idSwitches).toBe(0);
      expect(scores.tracks.find((t) => t.track === s.track)!.purity).toBeGreaterThanOrEqual(0.95);
    }
    expect(new Set(scores.sources.map((s) => s.track)).size).toBe(2);
  });
});

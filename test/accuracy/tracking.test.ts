/**
 * Tracking on scenes rendered by the simulator (tracking issue): the true directions come
 * from the scene's geometry through REC.truth.jsonl; the angle wrap at +-180 degrees is the
 * usual circular convention (Mardia and Jupp, Directional Statistics, 2000).
 */
import { describe, expect, it } from 'vitest';
import { eventSource, truthAzimuthDuring } from '../../src/accuracy/track-match.js';
import { angleDiffDeg } from '../../src/track/circular.js';
import { indexTruth, TRUTH_STEP_S } from '../../src/accuracy/truth.js';
import { runCli } from '../helpers/cli.js';
import { DEG, render, scanEvents, truthOf } from './helpers.js';
import { tempDir } from '../helpers/temp-dir.js';

const R = 10;
const at = (azDeg: number, z = 1.5): number[] => [R * Math.sin(azDeg * DEG), R * Math.cos(azDeg * DEG), z];

function scene(sources: unknown[], durationS: number): unknown {
  return {
    sample_rate_hz: 48000,
    duration_s: durationS,
    seed: 5,
    speed_of_sound_m_s: 343,
    array: { geometry: 'square-20cm', position_m: [0, 0, 1.5], heading_deg: 0 },
    sources,
    noise: { floor_dbfs: -60 },
  };
}

const burst = (name: string, path: unknown[], startS: number): unknown => ({
  name,
  path,
  signal: { type: 'noise', low_hz: 500, high_hz: 8000 },
  level: { dbfs_at_array: -25 },
  calls: { start_s: startS, length_s: 0.12, every_s: 0.5 },
});

describe('tracks on simulated scenes', () => {
  const dir = tempDir('accuracy').dir;

  it('a source moving behind the array across the +-180 degree seam (150 -> 210 degrees in 6 s) keeps one track id', () => {
    // A straight path between the two points; it crosses azimuth 180 at 3 s.
    const wav = render(dir, 'seam', scene([burst('walker', [{ time_s: 0, position_m: at(150) }, { time_s: 6, position_m: at(210) }], 0.2)], 6));
    const truth = truthOf(wav);
    expect(truth.some((r) => r.azimuth_deg > 170) && truth.some((r) => r.azimuth_deg < -170)).toBe(true);
    const events = scanEvents(wav);
    const before = events.filter((e) => e.end_s < 2.8);
    const after = events.filter((e) => e.start_s > 3.2);
    console.log(`seam: ${events.length} events, tracks ${[...new Set(events.map((e) => e.track))].join(', ')}; azimuths ${events.map((e) => e.azimuth_deg.toFixed(0)).join(' ')}`);
    expect(before.length).toBeGreaterThan(3);
    expect(after.length).toBeGreaterThan(3);
    const ids = new Set(events.map((e) => e.track));
    expect(ids.size).toBe(1);
  });

  it('two sources crossing at different angular rates (-50 -> 50 and 30 -> -10 degrees in 6 s): each keeps its id through the crossing (events within 0.5 s of it exempt)', () => {
    const wav = render(
      dir,
      'cross',
      scene(
        [
          burst('fast', [{ time_s: 0, position_m: at(-50) }, { time_s: 6, position_m: at(50) }], 0.2),
          burst('slow', [{ time_s: 0, position_m: at(30) }, { time_s: 6, position_m: at(-10) }], 0.45),
        ],
        6,
      ),
    );
    const truth = indexTruth(truthOf(wav));
    const events = scanEvents(wav);
    const bySource = new Map<string, number[]>();
    const away = new Map<string, Set<number>>();
    // The crossing: where the two true directions (interpolated between calls) meet.
    const [fastTruth, slowTruth] = ['fast', 'slow'].map((n) => truth.sources.find((s) => s.name === n)!);
    let crossS = NaN;
    let closest = Infinity;
    for (let t = 0.5; t < 5.5; t += 0.01) {
      const d = Math.abs(angleDiffDeg(truthAzimuthDuring(fastTruth!, t, t), truthAzimuthDuring(slowTruth!, t, t)));
      if (d < closest) [closest, crossS] = [d, t];
    }
    console.log(`crossing at ${crossS.toFixed(2)} s (${closest.toFixed(2)} deg apart)`);
    for (const e of events) {
      const m = eventSource(truth, e, TRUTH_STEP_S);
      if (!m) continue;
      let list = bySource.get(m.source);
      if (!list) bySource.set(m.source, (list = []));
      list.push(e.track);
      if (e.end_s < crossS - 0.5 || e.start_s > crossS + 0.5) {
        let ids = away.get(m.source);
        if (!ids) away.set(m.source, (ids = new Set()));
        ids.add(e.track);
      }
    }
    let changes = 0;
    let steps = 0;
    for (const [name, ids] of bySource) {
      for (let i = 1; i < ids.length; i++) {
        steps++;
        if (ids[i] !== ids[i - 1]) changes++;
      }
      console.log(`crossing, ${name}: ${ids.length} events, track ids in order: ${ids.join(' ')}`);
    }
    const swapRate = steps ? changes / steps : NaN;
    console.log(`crossing: id changes between consecutive events of one source: ${changes} of ${steps} (${(100 * swapRate).toFixed(1)}%)`);
    expect(bySource.get('fast')?.length ?? 0).toBeGreaterThan(6);
    expect(bySource.get('slow')?.length ?? 0).toBeGreaterThan(6);
    // The sources start on different tracks.
    expect(bySource.get('fast')![0]).not.toBe(bySource.get('slow')![0]);
    expect(swapRate).toBeLessThan(0.5);
    // Issue 13 item 4: away from the crossing each source has one id, and not the other's.
    expect([...away.get('fast')!]).toEqual([bySource.get('fast')![0]]);
    expect([...away.get('slow')!]).toEqual([bySource.get('slow')![0]]);
  });

  // The analysis' evidence memory (--memory, 0.15 s by default) smooths the hop directions over
  // time: on 0.4 s calls of a caller sweeping ~20 deg/s the fitted line then lags (ends ~2-3
  // degrees behind) and its slope reads ~25 % low (measured: rate error median 5.3, max 5.9
  // deg/s; ends max 3.2 deg; before the confidence refit of --quiet-memory median 4.1-5.3, max
  // 4.7-5.5). With --memory 0 the line follows the truth (rate within ~1 deg/s).
  for (const [label, args, rateTol, endTol] of [
    ['--memory 0', ['--memory', '0'], 1.5, 1.5],
    ['the defaults', [], 6.5, 3.5],
  ] as const) {
    it(`a caller sweeping about 20 deg/s (-40 -> 40 degrees in 4 s, 0.4 s calls), ${label}: events give where each call started and ended and its rate (JSON and CSV)`, () => {
      const wav = render(
        dir,
        'sweep',
        scene([{ ...(burst('sweeper', [{ time_s: 0, position_m: at(-40) }, { time_s: 4, position_m: at(40) }], 0.2) as object), calls: { start_s: 0.2, length_s: 0.4, every_s: 0.6 } }], 4),
      );
      const truth = indexTruth(truthOf(wav));
      const src = truth.sources[0]!;
      const events = scanEvents(wav, ...args).filter((e) => e.end_s - e.start_s > 0.3);
      expect(events.length).toBeGreaterThanOrEqual(5);
      const errs: number[] = [];
      const rateErrs: number[] = [];
      for (const e of events) {
        // The truth at the event's ends: its records within 10 ms of them (TRUTH_STEP_S).
        const t0 = truthAzimuthDuring(src, e.start_s, e.start_s + 0.01);
        const t1 = truthAzimuthDuring(src, e.end_s - 0.01, e.end_s);
        const rate = angleDiffDeg(t1, t0) / (e.end_s - e.start_s);
        errs.push(Math.abs(angleDiffDeg(e.start_azimuth_deg!, t0)), Math.abs(angleDiffDeg(e.end_azimuth_deg!, t1)));
        rateErrs.push(Math.abs(e.rate_deg_s! - rate));
      }
      errs.sort((a, b) => a - b);
      rateErrs.sort((a, b) => a - b);
      console.log(`sweep, ${label}: ${events.length} events; start/end errors median ${errs[errs.length >> 1]!.toFixed(2)}, max ${errs[errs.length - 1]!.toFixed(2)} deg; rate errors median ${rateErrs[rateErrs.length >> 1]!.toFixed(2)}, max ${rateErrs[rateErrs.length - 1]!.toFixed(2)} deg/s`);
      expect(rateErrs[rateErrs.length - 1]!).toBeLessThan(rateTol);
      expect(errs[errs.length - 1]!).toBeLessThan(endTol);
      // CSV carries the same three columns.
      const csv = runCli(['scan', wav, '--array', wav.replace(/\.wav$/, '.array.json'), '--format', 'csv', ...args]);
      expect(csv.status).toBe(0);
      const [head, row] = csv.stdout.split('\n');
      const cols = head!.split(',');
      for (const name of ['start_azimuth_deg', 'end_azimuth_deg', 'rate_deg_s']) {
        expect(cols).toContain(name);
        expect(Number(row!.split(',')[cols.indexOf(name)])).toSatisfy(Number.isFinite);
      }
    });
  }
});

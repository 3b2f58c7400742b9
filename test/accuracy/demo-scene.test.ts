/**
 * The built-in demo scene (configs/scenes/wetland-dusk.json) rendered by the simulator and
 * scored against its own truth. Issue targets: at least 80% of hops with an active source
 * within 5 degrees; count of tracks and events against the truth (the truth's calls are runs
 * of active truth steps, src/sim/truth.ts). `bearline demo --fast` is run end to end with the
 * cache in a temporary folder.
 */
import { join } from 'node:path';
import { readdirSync } from 'node:fs';
import { beforeAll, describe, expect, it } from 'vitest';
import type { AccuracyReport } from '../../src/accuracy/score.js';
import { runCli } from '../helpers/cli.js';
import { truthAzimuthDuring } from '../../src/accuracy/track-match.js';
import { indexTruth, TRUTH_STEP_S } from '../../src/accuracy/truth.js';
import { angleDiffDeg } from '../../src/track/circular.js';
import { accuracyJson, scanEvents, share, truthOf } from './helpers.js';
import { tempDir } from '../helpers/temp-dir.js';

describe('the demo scene (wetland station at dusk)', () => {
  const cache = tempDir('accuracy').dir;
  let first: ReturnType<typeof runCli>;
  let report: AccuracyReport;
  let wav: string;
  beforeAll(() => {
    first = runCli(['demo', '--fast'], { env: { XDG_CACHE_HOME: cache } });
    console.log(first.stdout.split('\n').slice(-14).join('\n'));
    wav = join(cache, 'bearline', readdirSync(join(cache, 'bearline')).find((f) => f.endsWith('.wav')) ?? 'missing.wav');
    report = accuracyJson(wav, '--temperature', '14');
    console.log(`demo scene: ${report.voicedHops} voiced hops, within 2/5/10 deg: ${report.within.map((w) => (100 * w.share).toFixed(1) + '%').join(' / ')}, median ${report.medianDeg?.toFixed(2)} deg, p90 ${report.p90Deg?.toFixed(2)} deg`);
    for (const s of report.sources) console.log(`  ${s.source}: ${s.voicedHops} hops alone, within 5 deg ${(100 * share(s as typeof report, 5)).toFixed(1)}%`);
  });

  it('bearline demo --fast renders once into the cache, prints a line per event and the table against the truth', () => {
    expect(first.status).toBe(0);
    const files = readdirSync(join(cache, 'bearline'));
    expect(files.filter((f) => f.endsWith('.wav'))).toHaveLength(1);
    expect(first.stderr).toMatch(/rendering .* once/);
    expect(first.stdout).toMatch(/^\s+\d:\d\d\.\d {2}bearing +\d+\.\d deg {2}track +\d+ {2}band /m);
    // The second run reuses the cached rendering.
    const again = runCli(['demo', '--fast'], { env: { XDG_CACHE_HOME: cache } });
    expect(again.status).toBe(0);
    expect(again.stderr).not.toMatch(/rendering/);
    expect(again.stdout).toBe(first.stdout);
  });

  it('the table lists every track that carried an event, and its "off by" is its mean minus the true bearing shown', () => {
    const rows = first.stdout.split('\n');
    const inLines = new Set(rows.map((l) => /^\s+\d:\d\d\.\d .* track +(\d+) /.exec(l)?.[1]).filter((x) => x !== undefined).map(Number));
    const tableRows = rows
      .map((l) => /^\s*(\d+)\s+(\d+)\s+(\d+\.\d) deg\s+\d+\.\d deg\s+.+?\s+(?:(\d+\.\d) deg|-)\s+(?:([+-]\d+\.\d) deg|-)\s+\d+$/.exec(l))
      .filter((m) => m !== null);
    const listed = new Set(tableRows.map((m) => Number(m[1])));
    expect(inLines.size).toBeGreaterThan(1);
    expect(listed.size).toBeGreaterThanOrEqual(inLines.size);
    for (const id of inLines) expect(listed.has(id)).toBe(true);
    for (const m of tableRows) {
      if (m[5] === undefined) continue;
      const diff = ((Number(m[3]) - Number(m[4]) + 540) % 360) - 180;
      expect(Math.abs(diff - Number(m[5]))).toBeLessThanOrEqual(0.11);
    }
  });

  it('tracks against the truth: each frog chorus (fixed) is followed by a track within 1 degree of its true bearing, carrying most of its calls', () => {
    const rows = first.stdout.split('\n');
    for (const [name, bearing] of [['frogs-reeds', 75], ['frogs-pond', 250]] as const) {
      const tracks = rows.filter((l) => l.includes(` ${name} `) && /deg\s+[+-]\d/.test(l));
      expect(tracks.length).toBeGreaterThan(0);
      const off = tracks.map((l) => Number(/([+-]\d+\.\d) deg\s+\d+$/.exec(l)![1]));
      expect(Math.min(...off.map(Math.abs))).toBeLessThan(1);
      const src = rows.find((l) => new RegExp(`^\\s*${name}\\s+fixed`).test(l))!;
      const [calls, events] = src.trim().split(/\s+/).slice(2, 4).map(Number);
      console.log(`${name} (true bearing ${bearing}): ${calls} calls in the truth, ${events} events, tracks: ${src.trim().split(/\s+/).slice(4).join(' ')}`);
      expect(events).toBeGreaterThan(0.5 * calls!);
      expect(events).toBeLessThan(1.5 * calls!);
    }
  });


  // Issue target (85.2% measured with the evidence-weighted fusion and calibrated confidence; 87% before).
  it('target: at least 80% of voiced hops within 5 degrees', () => {
    expect(report.voicedHops).toBeGreaterThan(2000);
    expect(share(report, 5)).toBeGreaterThanOrEqual(0.8);
  });

  // Issue 13 targets (met since settled tracks keep a home: the reed chorus was split over two
  // tracks, 1 and 3, the bird's track having walked onto its bearing at the end of the pass).
  it('target: one track per frog chorus', () => {
    for (const name of ['frogs-reeds', 'frogs-pond']) expect(first.stdout).toMatch(new RegExp(`^\\s*${name}\\s+fixed\\s+\\d+\\s+\\d+\\s+\\d+$`, 'm'));
  });
  // The passing bird (2.2-3.2 kHz sweeps on a 20 cm square, where the pairs alias) has a track
  // of its own carrying at least 60 % of its 17 calls (15 measured; the rest on two short
  // tracks of one event each).
  it('target: the passing bird has its own track, carrying at least 60 % of its calls', () => {
    // table rows: track, events, mean bearing, spread, source, true bearing, off by, events of it
    const rows = [...first.stdout.matchAll(/^\s*(\d+)\s+(\d+)\s+\S+ deg\s+\S+ deg\s+passing-bird\s+\S+ deg\s+\S+ deg\s+(\d+)$/gm)];
    const best = Math.max(0, ...rows.map((m) => Number(m[3])));
    expect(best / 17).toBeGreaterThanOrEqual(0.6);
  });

  // Issue 13, no chaining: with the speed of sound off, bearings shift a little but no track
  // carries events of two sources. An event is attributed to a source when exactly one source
  // active during it lies within 5 degrees of its azimuth, and no other source (calling or
  // between calls, within its time in the scene) lies within 5 degrees then; else it is left
  // out: a ghost, or two sources on one bearing, which no direction finder can tell apart (the
  // bird's last call comes from 1.1 degrees beside the reed chorus, and goes to its track).
  for (const c of ['343', '339.6']) {
    it(`no track carries events of two sources with --speed-of-sound ${c} (the scene is at 14 C, 339.7 m/s)`, () => {
      const truth = indexTruth(truthOf(wav));
      const events = scanEvents(wav, '--speed-of-sound', c);
      const sourcesOf = new Map<number, Set<string>>();
      let attributed = 0;
      for (const e of events) {
        const near = new Set<string>();
        for (let t = e.start_s; t <= e.end_s + 1e-9; t += TRUTH_STEP_S) {
          for (const r of truth.activeAt(t)) if (Math.abs(angleDiffDeg(e.azimuth_deg, r.azimuth_deg)) <= 5) near.add(r.source);
        }
        if (near.size !== 1) continue;
        const crowded = truth.sources.some(
          (src) =>
            !near.has(src.name) &&
            src.records[0]!.time_s <= e.end_s &&
            src.records[src.records.length - 1]!.time_s >= e.start_s &&
            Math.abs(angleDiffDeg(e.azimuth_deg, truthAzimuthDuring(src, e.start_s, e.end_s))) <= 5,
        );
        if (crowded) continue;
        attributed++;
        let set = sourcesOf.get(e.track);
        if (!set) sourcesOf.set(e.track, (set = new Set()));
        set.add([...near][0]!);
      }
      console.log(`c = ${c}: ${events.length} events (${attributed} attributed), tracks: ${[...sourcesOf].map(([k, v]) => `${k}: ${[...v].join('+')}`).join('; ')}`);
      expect(attributed).toBeGreaterThan(0.8 * events.length);
      for (const set of sourcesOf.values()) expect(set.size).toBe(1);
      const bird = [...sourcesOf].filter(([, v]) => v.has('passing-bird'));
      expect(bird.length).toBeGreaterThan(0);
    });
  }
});

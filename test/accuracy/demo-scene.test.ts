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
import { accuracyJson, share } from './helpers.js';
import { tempDir } from '../helpers/temp-dir.js';

describe('the demo scene (wetland station at dusk)', () => {
  const cache = tempDir('accuracy').dir;
  let first: ReturnType<typeof runCli>;
  let report: AccuracyReport;
  beforeAll(() => {
    first = runCli(['demo', '--fast'], { env: { XDG_CACHE_HOME: cache } });
    console.log(first.stdout.split('\n').slice(-14).join('\n'));
    const wav = join(cache, 'bearline', readdirSync(join(cache, 'bearline')).find((f) => f.endsWith('.wav')) ?? 'missing.wav');
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

  // Targets not yet met (issue 13, the tracker): each chorus is one track, and the passing bird
  // (2.2-3.2 kHz sweeps on a 20 cm square, where the pairs alias) has a track of its own that
  // carries at least 60 % of its 17 calls. Measured with the evidence-weighted fusion: the reeds
  // chorus on tracks 1 and 3 (3 chains towards the bird, spread 51 deg), the bird's calls on
  // tracks 4 and 5 with one event each, although 79 % of its hops alone are within 5 deg.
  // it.fails turns red the day the tracker meets them; then make them plain it().
  it.fails('target: one track per frog chorus', () => {
    for (const name of ['frogs-reeds', 'frogs-pond']) expect(first.stdout).toMatch(new RegExp(`^\\s*${name}\\s+fixed\\s+\\d+\\s+\\d+\\s+\\d+$`, 'm'));
  });
  it.fails('target: the passing bird has its own track, carrying at least 60 % of its calls', () => {
    // table rows: track, events, mean bearing, spread, source, true bearing, off by, events of it
    const rows = [...first.stdout.matchAll(/^\s*(\d+)\s+(\d+)\s+\S+ deg\s+\S+ deg\s+passing-bird\s+\S+ deg\s+\S+ deg\s+(\d+)$/gm)];
    const best = Math.max(0, ...rows.map((m) => Number(m[3])));
    expect(best / 17).toBeGreaterThanOrEqual(0.6);
  });
});

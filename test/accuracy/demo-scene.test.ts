/**
 * The built-in demo scene (configs/scenes/wetland-dusk.json) rendered by the simulator and
 * scored against its own truth. Issue targets: at least 80% of hops with an active source
 * within 5 degrees; count of tracks and events against the truth (the truth's calls are runs
 * of active truth steps, src/sim/truth.ts). `bearline demo --fast` is run end to end with the
 * cache in a temporary folder.
 */
import { join } from 'node:path';
import { readdirSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { accuracyJson, share, tempDir } from './helpers.js';

describe('the demo scene (wetland station at dusk)', () => {
  const cache = tempDir();
  const first = runCli(['demo', '--fast'], { env: { XDG_CACHE_HOME: cache } });
  console.log(first.stdout.split('\n').slice(-14).join('\n'));

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

  const wav = join(cache, 'bearline', readdirSync(join(cache, 'bearline')).find((f) => f.endsWith('.wav')) ?? 'missing.wav');
  const report = accuracyJson(wav, '--temperature', '14');
  console.log(`demo scene: ${report.voicedHops} voiced hops, within 2/5/10 deg: ${report.within.map((w) => (100 * w.share).toFixed(1) + '%').join(' / ')}, median ${report.medianDeg?.toFixed(2)} deg, p90 ${report.p90Deg?.toFixed(2)} deg`);
  for (const s of report.sources) console.log(`  ${s.source}: ${s.voicedHops} hops alone, within 5 deg ${(100 * share(s as typeof report, 5)).toFixed(1)}%`);

  // Issue target (85.2% measured with the evidence-weighted fusion and calibrated confidence; 87% before).
  it('target: at least 80% of voiced hops within 5 degrees', () => {
    expect(report.voicedHops).toBeGreaterThan(2000);
    expect(share(report, 5)).toBeGreaterThanOrEqual(0.8);
  });

  // Target not yet met: each chorus is one track (the pond chorus is still split over two).
  // it.fails turns red the day the tracker meets it; then make it a plain it().
  it.fails('target: one track per frog chorus', () => {
    for (const name of ['frogs-reeds', 'frogs-pond']) expect(first.stdout).toMatch(new RegExp(`^\\s*${name}\\s+fixed\\s+\\d+\\s+\\d+\\s+\\d+$`, 'm'));
  });
  // The passing bird (2.2-3.2 kHz sweeps on a 20 cm square, where the pairs alias): with the
  // evidence-weighted fusion it has a track of its own (15 events for its 17 calls; 57.5 % of
  // its hops alone within 5 deg). Before, about a third of its hops and no track.
  it('target: the passing bird is followed by a track', () => {
    expect(first.stdout).toMatch(/^\s*passing-bird\s+moving\s+\d+\s+\d+\s+\d/m);
  });
});

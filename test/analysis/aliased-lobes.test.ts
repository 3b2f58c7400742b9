/**
 * A watched direction that is an aliased lobe of the hop's answer (src/analysis/watched-directions.ts,
 * aliasAz): above an array's spatial-aliasing limit a narrow-band sound fits its own direction and
 * its grating lobes alike, and the analysis, told where a tracked caller should be, reports that
 * place as an alias of the answer (aliasOf 0) when the hop's own bins fit it as well.
 *
 * Signals made by sox (an independent tool) with the far-field per-mic delays of interface.md
 * (common practice: t_i = -p_i . u / c), on the 20 cm and 10 cm squares. The lobe's place comes
 * from the grating-lobe condition of a grid of mics (common practice in array processing: for
 * mics on a square grid of spacing d, a plane wave of wavelength lambda from unit direction u
 * gives every pair the same phases as one from u + (lambda / d) (m, n, .) for whole m, n, where
 * that is a direction: its horizontal part at most 1 long), not from the project's search.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { analyzeArrays, createAnalysis } from '../../src/analysis/analysis.js';
import type { HopResult } from '../../src/analysis/hop-analyzer.js';
import { loadGeometryFile } from '../../src/geometry/geometry-file.js';
import { toFrameRecord } from '../../src/records/frame-record.js';
import type { SourceEstimate } from '../../src/records/record-types.js';
import { unitFromAzEl, wrapDeg } from '../../src/geometry/vec3.js';
import { farFieldDelaysUp, soxDecode, soxDelayedSignal, soxIndependentNoise, soxMix } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

const tmp = tempDir();
afterAll(() => tmp.cleanup());
const C = 343;
const TRUE_AZ = -22;

/** The (1, 0) grating lobe of a horizontal source at azimuth az (degrees, clockwise from the array's front, y) for wavelength / spacing ratio r: azimuth and elevation. */
function lobeOf(az: number, r: number): { az: number; el: number } {
  const ux = Math.sin((az * Math.PI) / 180) + r;
  const uy = Math.cos((az * Math.PI) / 180);
  const h = Math.hypot(ux, uy);
  if (h > 1) throw new Error('no such lobe');
  return { az: (Math.atan2(ux, uy) * 180) / Math.PI, el: (Math.acos(h) * 180) / Math.PI };
}

interface Hop {
  winnerAz: number;
  aliases: { az: number; of: number }[];
  /** The hop's frame record's sources (scan --frames). */
  recorded: SourceEstimate[];
}

/** Seven 0.15 s calls with soft edges, 0.35 s apart (the analysis hears onsets, not a steady tone). */
const CALLS = ['fade', 'h', '0.01', '0.15', '0.01', 'pad', '0.2', '0.15', 'repeat', '6'];

/** Scan sox-made calls from TRUE_AZ (horizontal) on `array`, watching the given directions on every hop; the valid hops' winners and aliases. */
function scanWatching(array: string, synth: string[], effects: string[], watch: { az: number; el: number; half?: number }[]): Hop[] {
  const geometry = loadGeometryFile(`configs/arrays/${array}.json`);
  const positions = geometry.mics.map((m) => m.position);
  const call = soxDelayedSignal({ out: `${tmp.dir}/${array}-${synth.join('-')}.wav`, delaysUp: farFieldDelaysUp(positions, unitFromAzEl(TRUE_AZ, 0), C, 480000), synth, effects: [...effects, ...CALLS], durationS: 0.15, gainDb: -12 }, tmp.dir);
  const noise = soxIndependentNoise(`${tmp.dir}/noise-${array}.wav`, positions.length, 3.5, -50, tmp.dir);
  const { rate, channels } = soxDecode(soxMix(`${tmp.dir}/mix-${array}-${synth.join('-')}.wav`, [{ path: call, volume: 1 }, { path: noise, volume: 1 }]));
  const setup = createAnalysis(geometry, rate, C, {});
  const az = Float64Array.from(watch, (w) => w.az);
  const el = Float64Array.from(watch, (w) => w.el);
  const half = Float64Array.from(watch, (w) => w.half ?? 8);
  const hops: Hop[] = [];
  setup.analyzer.watch(az, el, half, watch.length);
  analyzeArrays(setup, channels, (r: HopResult) => {
    if (r.valid) {
      const aliases: Hop['aliases'] = [];
      for (let i = 0; i < r.sourceCount; i++) if (r.sources[i]!.aliasOf >= 0) aliases.push({ az: r.sources[i]!.azimuthDeg, of: r.sources[i]!.aliasOf });
      const settings = { headingDeg: null, mirror: setup.model.mirror, pairs: setup.model.pairs, diagnostics: false, viewerFields: false };
      hops.push({ winnerAz: r.sources[0]!.azimuthDeg, aliases, recorded: toFrameRecord(r, settings).sources ?? [] });
    }
    // a watch is for one hop, as the tracking session hands it in after each
    setup.analyzer.watch(az, el, half, watch.length);
  });
  return hops;
}

const near = (a: number, b: number, tol: number) => Math.abs(wrapDeg(a - b)) <= tol;

describe('aliased lobes of a narrow-band call, told apart by where a tracked caller should be', () => {
  it('a 3 kHz tone on a 20 cm square, its caller watched: on hops answered at a lobe, the caller is reported as the alias of the answer, and nowhere else', () => {
    // A tone fits every lobe of the grid exactly; the analysis answers at one of them on most hops
    // (measured: at -46 deg, the (0, -1) lobe, 59 deg up: lobeOf's formula with the axes swapped).
    const hops = scanWatching('square-20cm', ['sine', '3000'], [], [{ az: TRUE_AZ, el: 0 }]);
    const atLobe = hops.filter((h) => !near(h.winnerAz, TRUE_AZ, 10));
    const atCaller = hops.filter((h) => near(h.winnerAz, TRUE_AZ, 3));
    const rescued = atLobe.filter((h) => h.aliases.some((a) => a.of === 0 && near(a.az, TRUE_AZ, 3)));
    const strayAliases = hops.flatMap((h) => h.aliases).filter((a) => !near(a.az, TRUE_AZ, 3));
    console.log(`3 kHz tone: ${hops.length} hops; answered at a lobe ${atLobe.length} (the caller reported as its alias on ${rescued.length}), at the caller ${atCaller.length} (with an alias ${atCaller.filter((h) => h.aliases.length > 0).length}); aliases elsewhere ${strayAliases.length}`);
    // Measured: 42 hops, 35 at a lobe (the caller as its alias on 18, 15 with the test at the
    // watched elevation alone: a tone fills 3-4 bins of a hop, and the test asks for 5), 7 at the
    // caller (none with an alias), no alias elsewhere.
    expect(atLobe.length).toBeGreaterThanOrEqual(0.5 * hops.length);
    expect(rescued.length).toBeGreaterThanOrEqual(0.25 * atLobe.length);
    expect(strayAliases).toEqual([]);
    expect(atCaller.every((h) => h.aliases.length === 0)).toBe(true);
    // frame records (scan --frames) mark the alias and only it: alias_of 0, at its azimuth
    for (const h of hops) {
      const marked = h.recorded.filter((src) => src.alias_of !== undefined);
      expect(marked.map((src) => [src.alias_of, Math.round(src.azimuth_deg)])).toEqual(h.aliases.map((a) => [a.of, Math.round(a.az)]));
    }
  });

  it('the same tone, its caller watched 16 deg to the side and 10 deg too high (a wide gate, a track\'s elevation off): the caller is still reported as the alias', () => {
    // A track that coasted between calls is predicted off its caller, with a gate of 20 deg; its
    // elevation, learned from earlier hops, may be 10 deg off too. At 3 kHz on 20 cm the caller's
    // azimuth at an elevation 10 deg off lies about 0.1 of a period off on the diagonal, and its
    // bins fit it there poorly, so the test looks over the gate (up to 30 deg) and at elevations
    // 5, 10 and 15 deg either side of the watched one. Measured: 42 hops, 35 at a lobe, the caller
    // as its alias on 18 (on none with the test 10 deg either side at the watched elevation alone).
    // Watched on the side away from the (1, 0) lobe (12 deg, 18.6 deg up: inside a window on the
    // other side, where the tone fits it as well as its caller).
    const hops = scanWatching('square-20cm', ['sine', '3000'], [], [{ az: TRUE_AZ - 16, el: 10, half: 20 }]);
    const atLobe = hops.filter((h) => !near(h.winnerAz, TRUE_AZ, 10));
    const rescued = atLobe.filter((h) => h.aliases.some((a) => a.of === 0 && near(a.az, TRUE_AZ, 3)));
    const strayAliases = hops.flatMap((h) => h.aliases).filter((a) => !near(a.az, TRUE_AZ, 3));
    console.log(`3 kHz tone watched off its caller: ${hops.length} hops; answered at a lobe ${atLobe.length} (the caller reported as its alias on ${rescued.length}); aliases elsewhere ${strayAliases.length}`);
    expect(atLobe.length).toBeGreaterThanOrEqual(0.5 * hops.length);
    expect(rescued.length).toBeGreaterThanOrEqual(0.25 * atLobe.length);
    expect(strayAliases).toEqual([]);
  });

  it('a 2.85-3.15 kHz band on the same square, its (1, 0) lobe watched: answered at the caller, the lobe is reported as its alias where the formula puts it', () => {
    // lambda / d at 3 kHz on 20 cm: 343 / 3000 / 0.2 = 0.572; the lobe at 12.0 deg, 18.6 deg up.
    const lobe = lobeOf(TRUE_AZ, C / 3000 / 0.2);
    const hops = scanWatching('square-20cm', ['whitenoise'], ['sinc', '2850-3150'], [lobe]);
    const atCaller = hops.filter((h) => near(h.winnerAz, TRUE_AZ, 3));
    const aliases = hops.flatMap((h) => h.aliases);
    console.log(`3 kHz band: ${hops.length} hops, ${atCaller.length} answered at the caller; aliases ${aliases.length}, at ${aliases.map((a) => a.az.toFixed(0)).join(' ')}`);
    // Measured: 104 hops, all at the caller; the lobe an alias on 29 (31 with the test at the
    // watched elevation alone; the band's edges read the lobe 2 deg either side of its centre's
    // place, and fewer of its bins fit it).
    expect(atCaller.length).toBeGreaterThanOrEqual(0.95 * hops.length);
    expect(aliases.length).toBeGreaterThanOrEqual(0.15 * hops.length);
    for (const a of aliases) expect(Math.abs(wrapDeg(a.az - lobe.az))).toBeLessThanOrEqual(2);
  });

  it('a broadband call (0.5-8 kHz) on the same square has no lobe: no alias at the place of the tone\'s', () => {
    const lobe = lobeOf(TRUE_AZ, C / 3000 / 0.2);
    const hops = scanWatching('square-20cm', ['whitenoise'], ['sinc', '500-8000'], [lobe]);
    const aliased = hops.filter((h) => h.aliases.length > 0);
    console.log(`broadband: ${hops.length} hops, ${aliased.length} with an alias`);
    expect(hops.length).toBeGreaterThan(60);
    expect(hops.filter((h) => near(h.winnerAz, TRUE_AZ, 3)).length).toBeGreaterThanOrEqual(0.95 * hops.length);
    expect(aliased.length).toBe(0);
  });

  it('a low call on a 10 cm square (0.3-0.6 kHz, one wide beam): a watched direction 20 deg off is no alias', () => {
    // The call's bins may fit a direction 20 deg from it nearly as well as its own (the beam of a
    // 10 cm array at 0.3-0.6 kHz is that wide), but so do the directions between: one beam, not a
    // separate lobe. Measured: 105 hops, none with an alias; without the test of the direction
    // halfway (ALIAS_DIP) 5.
    const hops = scanWatching('square-10cm', ['whitenoise'], ['sinc', '300-600'], [{ az: TRUE_AZ + 20, el: 0 }]);
    const aliased = hops.filter((h) => h.aliases.length > 0);
    console.log(`low call on 10 cm: ${hops.length} hops, ${aliased.length} with an alias`);
    expect(hops.length).toBeGreaterThan(60);
    expect(aliased.length).toBeLessThanOrEqual(1);
  });
});

/**
 * A dummy head as a "pair": the MIT KEMAR head-related impulse responses (Gardner and Martin,
 * JASA 97(6), 1995; Debian libmysofa1, read at test time with mysofa2json, see
 * kemar_takes.py), white noise convolved with the horizontal-plane responses of the front
 * half (numpy). Compared with
 *  - Woodworth's spherical-head formula ITD = (a / c)(theta + sin theta), a = 0.0875 m
 *    (references.md), for the tdoa curve and for the spacing a sine-law pair would need
 *    to match it;
 *  - the largest interaural delay of an adult head, about 600-700 us (common practice,
 *    no source).
 */
import { existsSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { BenchFit } from '../../src/bench-check/array-fit.js';
import { pairGeometry } from '../../src/geometry/array-geometry.js';
import { tempDir } from '../helpers/temp-dir.js';
import { fitTakes, python, type MadeTake } from './bench-helpers.js';

const SOFA = '/usr/share/libmysofa/MIT_KEMAR_normal_pinna.sofa';
const A = 0.0875;
const C = 343;
const DEG = Math.PI / 180;

/** Woodworth's ITD as a bearline tdoa (channel 0 = left ear): positive for a source on the left. */
function woodworthTdoa(azDeg: number): number {
  const th = Math.abs(azDeg) * DEG;
  return -Math.sign(azDeg) * (A / C) * (th + Math.sin(th));
}

describe('check-array on the MIT KEMAR dummy head (libmysofa1)', () => {
  const tmp = tempDir('bearline-check-kemar-');
  let fit: BenchFit;
  let takes: MadeTake[];
  let earsM = 0;
  beforeAll(() => {
    if (!existsSync(SOFA)) throw new Error(`${SOFA} is missing: apt-get install -y libmysofa1 libmysofa-utils (the test reads the KEMAR set)`);
    const made = JSON.parse(python('kemar_takes.py', [tmp.dir])) as { rate: number; ears_sofa_m: number[][]; takes: { az: number; path: string }[] };
    takes = made.takes.map((t) => ({ az: t.az, el: null, path: t.path }));
    // The file geometry: the SOFA receiver positions (y left in SOFA = -x in ours), 0.18 m apart.
    earsM = Math.abs(made.ears_sofa_m[0]![1]! - made.ears_sofa_m[1]![1]!);
    fit = fitTakes(pairGeometry(earsM), takes);
  });
  afterAll(() => tmp.cleanup());

  it('follows Woodworth within 35 us over the front +-60 degrees and keeps its sign and symmetry', () => {
    expect(takes.length).toBe(37);
    let worst = 0;
    for (const t of fit.takes) {
      if (Math.abs(t.azimuthDeg) > 60) continue;
      worst = Math.max(worst, Math.abs(t.measuredS[0]! - woodworthTdoa(t.azimuthDeg)));
    }
    process.stdout.write(`KEMAR: largest deviation from Woodworth within +-60 deg: ${(worst * 1e6).toFixed(1)} us\n`);
    expect(worst).toBeLessThan(35e-6);
    const at = (az: number): number => fit.takes.find((t) => t.azimuthDeg === az)!.measuredS[0]!;
    expect(at(0)).toBeCloseTo(0, 5);
    expect(at(-45)).toBeGreaterThan(0); // left source: left ear first, tdoa = t_right - t_left > 0
    expect(Math.abs(at(-45) + at(45))).toBeLessThan(5e-6);
  });

  it('has its largest delay at the side, near the common-practice 600-700 us', () => {
    let big = 0;
    let bigAz = 0;
    for (const t of fit.takes) {
      if (Math.abs(t.measuredS[0]!) > big) {
        big = Math.abs(t.measuredS[0]!);
        bigAz = t.azimuthDeg;
      }
    }
    process.stdout.write(`KEMAR: largest |tdoa| ${(big * 1e6).toFixed(1)} us at azimuth ${bigAz}; Woodworth at 90 deg: ${(Math.abs(woodworthTdoa(90)) * 1e6).toFixed(1)} us\n`);
    expect(Math.abs(bigAz)).toBeGreaterThanOrEqual(80);
    // Broadband GCC-PHAT on KEMAR gives somewhat more than Woodworth's 656 us at the side
    // (low frequencies travel round the head more slowly: Kuhn's 3 (a / c) sin theta limit).
    expect(big).toBeGreaterThan(600e-6);
    expect(big).toBeLessThan(750e-6);
  });

  it('fits an effective spacing near the one a sine-law pair needs to match Woodworth', () => {
    // Least-squares spacing of tdoa = -D sin(az) / c against Woodworth over the same directions.
    let num = 0;
    let den = 0;
    for (const t of fit.takes) {
      const s = Math.sin(t.azimuthDeg * DEG);
      num += -woodworthTdoa(t.azimuthDeg) * C * s;
      den += s * s;
    }
    const dWoodworth = num / den;
    const d = fit.spacing!.value;
    process.stdout.write(`KEMAR: fitted effective spacing ${d.toFixed(4)} +- ${fit.spacing!.sigma.toFixed(4)} m (file ${earsM} m); Woodworth sine-law spacing ${dWoodworth.toFixed(4)} m; offset ${(fit.offset[1]!.value * 1e6).toFixed(2)} us\n`);
    expect(Math.abs(d - dWoodworth) / dWoodworth).toBeLessThan(0.08);
    // Wider than the ear-to-ear distance of the file: sound bends round the head.
    expect(d).toBeGreaterThan(earsM);
    // A left-right symmetric head has no timing offset between its ears.
    expect(Math.abs(fit.offset[1]!.value)).toBeLessThan(10e-6);
  });
});

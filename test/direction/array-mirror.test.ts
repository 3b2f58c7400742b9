/**
 * The mirror convention (README "Conventions") checked against its own statement, computed here
 * independently: for a horizontal line with its axis at azimuth A, a source at azimuth a and its
 * image 2A - a give the same delays (a line resolves only the angle to its axis: common
 * practice, no source; references.md "a pair can resolve only -90..90"); the reported one is the
 * one with the larger front component cos(a), or the one on the right (sin > 0) when the axis
 * lies within 5 degrees of y.
 */
import { describe, expect, it } from 'vitest';
import type { ArrayGeometry } from '../../src/geometry/array-geometry.js';
import { arrayMirror, reportedAzimuthDeg } from '../../src/geometry/array-mirror.js';
import { UsageError } from '../../src/util/errors.js';
import { PairDirectionModel } from '../../src/direction/pair-direction.js';
import { SrpDirectionModel } from '../../src/direction/srp-search.js';
import type { Direction, DirectionModel } from '../../src/direction/direction-model.js';

const DEG = Math.PI / 180;
const wrap = (a: number) => {
  const x = (((a + 180) % 360) + 360) % 360 - 180;
  return x === -180 ? 180 : x;
};

function lineAt(axisDeg: number, tiltDeg = 0, mics = 2): ArrayGeometry {
  const u = [Math.sin(axisDeg * DEG) * Math.cos(tiltDeg * DEG), Math.cos(axisDeg * DEG) * Math.cos(tiltDeg * DEG), Math.sin(tiltDeg * DEG)];
  return {
    name: `line-${axisDeg}`,
    headingDeg: null,
    mics: Array.from({ length: mics }, (_, i) => ({ channel: i, position: [u[0]! * 0.1 * i, u[1]! * 0.1 * i, u[2]! * 0.1 * i] as const })),
  };
}

describe('which of two mirror images a line reports', () => {
  it('horizontal lines at every 7.5 deg of axis, 2 and 4 mics: the image with the larger front component, or the right one near y', () => {
    for (let axis = 0; axis < 180; axis += 7.5) {
      for (const mics of [2, 4]) {
        const m = arrayMirror(lineAt(axis, 0, mics))!;
        expect(m.axisDeg, `axis ${axis}`).toBeCloseTo(axis, 6);
        const nearY = Math.min(axis, 180 - axis) <= 5;
        expect(m.kind).toBe(Math.abs(Math.sin(axis * DEG)) >= Math.abs(Math.cos(axis * DEG)) - 1e-12 ? 'front-back' : 'left-right');
        for (let a = -177; a <= 180; a += 11) {
          const image = wrap(2 * axis - a);
          const got = reportedAzimuthDeg(a, m);
          expect([wrap(a), image].some((x) => Math.abs(wrap(got - x)) < 1e-9), `axis ${axis}, source ${a}: ${got}`).toBe(true);
          const other = Math.abs(wrap(got - a)) < 1e-9 ? image : wrap(a);
          if (nearY) expect(Math.sin(got * DEG)).toBeGreaterThanOrEqual(Math.sin(other * DEG) - 1e-9);
          else expect(Math.cos(got * DEG)).toBeGreaterThanOrEqual(Math.cos(other * DEG) - 1e-9);
        }
      }
    }
  });

  it('the pair model and the SRP line solve exact far-field lags (interface.md: tdoa = (p_a - p_b) . u / c) to that image, every 15 deg of axis', () => {
    const fs = 48000;
    const c = 343;
    for (let axis = 0; axis < 180; axis += 15) {
      const models: [string, ArrayGeometry, DirectionModel][] = [];
      const pair = lineAt(axis, 0, 2);
      models.push(['pair', pair, new PairDirectionModel(pair, fs, c, 0.1, 1024)]);
      const line = lineAt(axis, 0, 3);
      models.push(['3-mic line', line, new SrpDirectionModel(line, fs, c, 0.1, 1024)]);
      for (const [what, g, model] of models) {
        for (let a = -177; a <= 180; a += 11) {
          const u = [Math.sin(a * DEG), Math.cos(a * DEG), 0];
          const lags = Float64Array.from(model.pairs, ([i, j]) => {
            const pi = g.mics[i]!.position;
            const pj = g.mics[j]!.position;
            return (((pi[0] - pj[0]) * u[0]! + (pi[1] - pj[1]) * u[1]! + (pi[2] - pj[2]) * u[2]!) / c) * fs;
          });
          const out: Direction = { azimuthDeg: NaN, elevationDeg: null };
          expect(model.solve(lags, 0, out)).toBe(true);
          const image = wrap(2 * axis - a);
          const nearY = Math.min(axis, 180 - axis) <= 5;
          const better = (x: number) => (nearY ? Math.sin(x * DEG) : Math.cos(x * DEG));
          const expected = better(wrap(a)) >= better(image) ? wrap(a) : image;
          expect(Math.abs(wrap(out.azimuthDeg - expected)), `${what}, axis ${axis}, source ${a}: ${out.azimuthDeg}`).toBeLessThan(1e-4);
        }
      }
    }
  });

  it('a pair along y laid a few degrees off by hand still reports the right (within 5 deg); 10 deg off, the front image', () => {
    expect(arrayMirror(lineAt(3))!.sideDeg).toBeCloseTo(93, 6);
    expect(arrayMirror(lineAt(-3))!.sideDeg).toBeCloseTo(87, 6);
    expect(arrayMirror(lineAt(10))!.sideDeg).toBeCloseTo(-80, 6);
  });

  it('a line up to 60 deg from horizontal is accepted; steeper is a UsageError naming the fix', () => {
    expect(arrayMirror(lineAt(90, 45))).toMatchObject({ kind: 'front-back', axisDeg: 90 });
    expect(() => arrayMirror(lineAt(90, 70))).toThrow(UsageError);
    expect(() => arrayMirror(lineAt(0, 90))).toThrow(/lay the line within 60 degrees of horizontal, or add a mic off the line/);
  });

  it('planes: horizontal is up-down with no azimuth axis; tilted 30 deg still up-down; 60 deg tilted about x is front-back', () => {
    const plane = (tiltDeg: number): ArrayGeometry => {
      const c = Math.cos(tiltDeg * DEG);
      const s = Math.sin(tiltDeg * DEG);
      const pts = [[-0.05, 0.05], [0.05, 0.05], [0.05, -0.05], [-0.05, -0.05]];
      return { name: 'tilted', headingDeg: null, mics: pts.map(([x, y], channel) => ({ channel, position: [x!, y! * c, y! * s] as const })) };
    };
    expect(arrayMirror(plane(0))).toMatchObject({ kind: 'up-down', axisDeg: null, sideDeg: null });
    expect(arrayMirror(plane(0))!.normal[2]).toBeCloseTo(1, 9);
    expect(arrayMirror(plane(30))!.kind).toBe('up-down');
    const steep = arrayMirror(plane(60))!;
    expect(steep.kind).toBe('front-back');
    expect(steep.normal[1]).toBeGreaterThan(0);
    expect(steep.axisDeg).toBeCloseTo(90, 6);
  });
});

/**
 * Arrays in any orientation: pairs and lines along any horizontal axis, planar arrays in an
 * upright plane, arrays wider than a default frame.
 *
 * Signals: far-field delays made by sox, independently of the project (10x rate, whole-sample
 * delays per channel, resample; ../shared/references.md), from the arrival times of interface.md
 * (t_i = -p_i . u / c, so tdoa = (p_a - p_b) . u / c). Expected answers: a line resolves only the
 * angle between the source and its axis, a plane only up to its mirror image across the plane
 * (common practice, no source; references.md: "a pair can resolve only -90..90"), and the side
 * reported is the README's convention (larger front component; a tie goes to the right).
 */
import { writeFileSync } from 'node:fs';
import { afterAll, describe, expect, it } from 'vitest';
import type { ArrayGeometry } from '../../src/geometry/array-geometry.js';
import { arrayMirror } from '../../src/geometry/array-mirror.js';
import { unitFromAzEl, wrapDeg, type Vec3 } from '../../src/geometry/vec3.js';
import { analyzeArrays, createAnalysis } from '../../src/analysis/analysis.js';
import { expectUsageFailure, runCli } from '../helpers/cli.js';
import { farFieldDelaysUp, soxDecode, soxDelayedSignal } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

const tmp = tempDir();
afterAll(() => tmp.cleanup());
const C = 343;
const UP = 480000;

function geometry(name: string, positions: Vec3[]): ArrayGeometry {
  return { name, headingDeg: null, mics: positions.map((position, channel) => ({ channel, position })) };
}

/** The geometry file of interface.md for an array. */
function geometryFile(g: ArrayGeometry): string {
  const path = `${tmp.dir}/${g.name}.json`;
  writeFileSync(path, JSON.stringify({ name: g.name, mics: g.mics.map((m) => ({ channel: m.channel, position_m: [...m.position] })) }));
  return path;
}

let serial = 0;
/** sox-made recording of one far-field source; `bursts` gives four 0.3 s calls with 0.5 s pauses. */
function render(g: ArrayGeometry, azDeg: number, elDeg = 0, bursts = false): string {
  const delays = farFieldDelaysUp(g.mics.map((m) => m.position), unitFromAzEl(azDeg, elDeg), C, UP);
  const effects = bursts ? ['sinc', '300-6000', 'trim', '0', '0.3', 'pad', '0.1', '0.4', 'repeat', '3'] : ['sinc', '200-8000'];
  return soxDelayedSignal({ out: `${tmp.dir}/${g.name}-${serial++}.wav`, delaysUp: delays, durationS: 0.5, effects }, tmp.dir);
}

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)]!;
}

/** Median direction and per-pair delay of the confident hops, analysed in-process. */
function analyse(g: ArrayGeometry, wav: string) {
  const { rate, channels } = soxDecode(wav);
  const setup = createAnalysis(g, rate, C, {});
  const az: number[] = [];
  const el: number[] = [];
  const tdoa: number[][] = setup.model.pairs.map(() => []);
  analyzeArrays(setup, channels, (r) => {
    if (!r.valid) return;
    az.push(r.sources[0]!.azimuthDeg);
    el.push(r.sources[0]!.elevationDeg ?? NaN);
    r.tdoaS.forEach((t, p) => tdoa[p]!.push(t));
  });
  // Azimuths as offsets from the first one, so a median does not straddle +-180.
  const ref = az[0] ?? 0;
  return {
    hops: az.length,
    azimuthDeg: wrapDeg(ref + median(az.map((a) => wrapDeg(a - ref)))),
    elevationDeg: median(el),
    tdoaS: tdoa.map(median),
    setup,
  };
}

/** Far-field delay of interface.md for each pair (a, b): (p_a - p_b) . u / c. */
function farFieldTdoa(g: ArrayGeometry, pairs: readonly (readonly [number, number])[], u: Vec3): number[] {
  return pairs.map(([a, b]) => {
    const pa = g.mics[a]!.position;
    const pb = g.mics[b]!.position;
    return ((pa[0] - pb[0]) * u[0] + (pa[1] - pb[1]) * u[1] + (pa[2] - pb[2]) * u[2]) / C;
  });
}

const jsonLines = (text: string) => text.trim().split('\n').filter((l) => l !== '').map((l) => JSON.parse(l) as Record<string, unknown>);

describe('a pair along y (sox-made delays): the angle to the axis, reported on the right', () => {
  const pairY = geometry('pair-y-20cm', [[0, -0.1, 0], [0, 0.1, 0]]);
  // Convention: the two mirror images (az and -az) have the same front component, so the one
  // on the right is reported: |az|.
  for (const az of [30, -30, 60, -120, 150, -150, 100]) {
    it(`a source at ${az} deg reads ${Math.abs(az)} deg; the delay is the far-field one`, () => {
      const r = analyse(pairY, render(pairY, az));
      expect(r.hops).toBeGreaterThan(10);
      expect(Math.abs(wrapDeg(r.azimuthDeg - Math.abs(az)))).toBeLessThan(1);
      expect(Math.abs(r.tdoaS[0]! - farFieldTdoa(pairY, [[0, 1]], unitFromAzEl(az, 0))[0]!)).toBeLessThan(2e-6);
      expect(r.setup.model.mirror?.kind).toBe('left-right');
    });
  }

  it('bearline scan: calls behind the pair become a track and events at the mirror side, with mirror left-right', () => {
    const wav = render(pairY, -150, 0, true);
    const r = runCli(['scan', wav, '--array', geometryFile(pairY)]);
    expect(r.status, r.stderr).toBe(0);
    const events = jsonLines(r.stdout);
    console.log('y pair, source at -150:', events.map((e) => `${e['azimuth_deg']} (track ${e['track']})`).join(', '));
    expect(events.length).toBeGreaterThanOrEqual(3);
    expect(events.length).toBeLessThanOrEqual(5);
    for (const e of events) {
      expect(Math.abs(wrapDeg((e['azimuth_deg'] as number) - 150))).toBeLessThan(2);
      expect(e['mirror']).toBe('left-right');
      expect(e['mirror_axis_deg']).toBe(0);
      expect(Number.isInteger(e['track'])).toBe(true);
    }
    const frames = jsonLines(runCli(['scan', wav, '--array', geometryFile(pairY), '--frames']).stdout);
    const voiced = frames.filter((f) => f['azimuth_deg'] !== null);
    expect(voiced.length).toBeGreaterThan(20);
    for (const f of frames) expect([f['mirror'], f['mirror_axis_deg']]).toEqual(['left-right', 0]);
    expect(voiced.filter((f) => Math.abs(wrapDeg((f['azimuth_deg'] as number) - 150)) < 2).length / voiced.length).toBeGreaterThan(0.9);
  });
});

describe('an oblique pair (axis at 45 deg, sox-made delays)', () => {
  // Axis from mic 0 to mic 1 along (1, 1, 0) / sqrt 2: az and 90 - az look alike; the one with
  // the larger front component is reported, i.e. the side centred on -45 ([-135, 45]).
  const d = 0.2 / Math.SQRT2;
  const pair45 = geometry('pair-45', [[-d / 2, -d / 2, 0], [d / 2, d / 2, 0]]);
  const cases: [number, number][] = [[0, 0], [90, 0], [-60, -60], [150, -60], [180, -90], [-170, -100], [20, 20], [70, 20]];
  it('every side reads as the image with the larger front component; mirror front-back, axis 45', () => {
    expect(arrayMirror(pair45)).toMatchObject({ kind: 'front-back', axisDeg: 45 });
    for (const [az, expected] of cases) {
      const r = analyse(pair45, render(pair45, az));
      expect(r.hops, `hops at ${az}`).toBeGreaterThan(10);
      expect(Math.abs(wrapDeg(r.azimuthDeg - expected)), `source at ${az}: read ${r.azimuthDeg.toFixed(2)}`).toBeLessThan(1.5);
      // independently: the reported image has the larger front component (cos az) of the two
      expect(Math.cos((expected * Math.PI) / 180)).toBeGreaterThanOrEqual(Math.cos(((90 - az) * Math.PI) / 180) - 1e-9);
    }
  });
});

describe('lines of 3 and 4 mics (sox-made delays, SRP search)', () => {
  const line3x = geometry('line3-x', [[-0.1, 0, 0], [0, 0, 0], [0.1, 0, 0]]);
  const line4y = geometry('line4-y', [[0, -0.09, 0], [0, -0.03, 0], [0, 0.03, 0], [0, 0.09, 0]]);
  it('3 mics along x: the front image (front-back mirror, axis 90), every pair on the far-field delay', () => {
    for (const [az, expected] of [[40, 40], [140, 40], [-100, -80], [-10, -10]] as const) {
      const r = analyse(line3x, render(line3x, az));
      expect(r.setup.model.mirror).toMatchObject({ kind: 'front-back', axisDeg: 90 });
      expect(Math.abs(wrapDeg(r.azimuthDeg - expected)), `source at ${az}`).toBeLessThan(1);
      const want = farFieldTdoa(line3x, r.setup.model.pairs, unitFromAzEl(az, 0));
      r.tdoaS.forEach((t, p) => expect(Math.abs(t - want[p]!), `pair ${p} at ${az}`).toBeLessThan(3e-6));
    }
  });
  it('4 mics along y: the right image (left-right mirror, axis 0)', () => {
    for (const [az, expected] of [[30, 30], [-30, 30], [-150, 150], [120, 120]] as const) {
      const r = analyse(line4y, render(line4y, az));
      expect(r.setup.model.mirror).toMatchObject({ kind: 'left-right', axisDeg: 0 });
      expect(Math.abs(wrapDeg(r.azimuthDeg - expected)), `source at ${az}`).toBeLessThan(1);
    }
  });
  it('bearline scan with a geometry file: 4 mics along y, calls behind-left give events at the right image, mirror on frames and events', () => {
    const wav = render(line4y, -130, 0, true);
    const file = geometryFile(line4y);
    const events = jsonLines(runCli(['scan', wav, '--array', file]).stdout);
    console.log('4-mic line along y, source at -130:', events.map((e) => e['azimuth_deg']).join(', '));
    expect(events.length).toBeGreaterThanOrEqual(3);
    for (const e of events) {
      expect(Math.abs(wrapDeg((e['azimuth_deg'] as number) - 130))).toBeLessThan(2);
      expect([e['mirror'], e['mirror_axis_deg']]).toEqual(['left-right', 0]);
    }
    const frames = jsonLines(runCli(['scan', wav, '--array', file, '--frames']).stdout);
    expect(frames.every((f) => f['mirror'] === 'left-right' && f['mirror_axis_deg'] === 0)).toBe(true);
  });
  it('3 mics along x through bearline scan: events carry mirror front-back (they lacked it before)', () => {
    const wav = render(line3x, 160, 0, true);
    const events = jsonLines(runCli(['scan', wav, '--array', geometryFile(line3x)]).stdout);
    expect(events.length).toBeGreaterThanOrEqual(3);
    for (const e of events) {
      expect(Math.abs(wrapDeg((e['azimuth_deg'] as number) - 20))).toBeLessThan(2);
      expect([e['mirror'], e['mirror_axis_deg']]).toEqual(['front-back', 90]);
    }
  });
});

describe('planar arrays in an upright plane (sox-made delays)', () => {
  // 10 cm square in the x-z plane: the mirror is the plane itself, so az and 180 - az (same
  // elevation) look alike and the front one is reported; elevation is resolved.
  const squareXZ = geometry('square-xz', [[-0.05, 0, 0.05], [0.05, 0, 0.05], [0.05, 0, -0.05], [-0.05, 0, -0.05]]);
  const squareYZ = geometry('square-yz', [[0, -0.05, 0.05], [0, 0.05, 0.05], [0, 0.05, -0.05], [0, -0.05, -0.05]]);
  it('x-z plane: front-back mirror; azimuth of the front image and elevation from the search agree with the records', () => {
    expect(arrayMirror(squareXZ)).toMatchObject({ kind: 'front-back', axisDeg: 90, sideDeg: 0 });
    for (const [az, el, wantAz] of [[30, 20, 30], [150, 20, 30], [-120, -30, -60], [0, 45, 0]] as const) {
      const r = analyse(squareXZ, render(squareXZ, az, el));
      expect(Math.abs(wrapDeg(r.azimuthDeg - wantAz)), `azimuth at ${az},${el}: ${r.azimuthDeg.toFixed(2)}`).toBeLessThan(2);
      expect(Math.abs(r.elevationDeg - el), `elevation at ${az},${el}: ${r.elevationDeg.toFixed(2)}`).toBeLessThan(2);
    }
  });
  it('y-z plane: left-right mirror; the right image is reported', () => {
    expect(arrayMirror(squareYZ)).toMatchObject({ kind: 'left-right', axisDeg: 0, sideDeg: 90 });
    for (const [az, el, wantAz] of [[30, 10, 30], [-45, 10, 45], [-160, -20, 160]] as const) {
      const r = analyse(squareYZ, render(squareYZ, az, el));
      expect(Math.abs(wrapDeg(r.azimuthDeg - wantAz)), `azimuth at ${az},${el}: ${r.azimuthDeg.toFixed(2)}`).toBeLessThan(2);
      expect(Math.abs(r.elevationDeg - el), `elevation at ${az},${el}`).toBeLessThan(2);
    }
  });
  it('bearline scan: an x-z plane array reports calls from behind at the front image, mirror front-back on events', () => {
    const wav = render(squareXZ, 135, 15, true);
    const events = jsonLines(runCli(['scan', wav, '--array', geometryFile(squareXZ)]).stdout);
    expect(events.length).toBeGreaterThanOrEqual(3);
    for (const e of events) {
      expect(Math.abs(wrapDeg((e['azimuth_deg'] as number) - 45))).toBeLessThan(2);
      expect(Math.abs((e['elevation_deg'] as number) - 15)).toBeLessThan(3);
      expect([e['mirror'], e['mirror_axis_deg']]).toEqual(['front-back', 90]);
    }
  });
  it('a horizontal square keeps its up-down mirror, now on events too', () => {
    const wav = render(geometry('square-h', [[-0.05, 0.05, 0], [0.05, 0.05, 0], [0.05, -0.05, 0], [-0.05, -0.05, 0]]), -100, 0, true);
    const events = jsonLines(runCli(['scan', wav, '--array', 'square-10cm']).stdout);
    expect(events.length).toBeGreaterThanOrEqual(3);
    for (const e of events) {
      expect(Math.abs(wrapDeg((e['azimuth_deg'] as number) + 100))).toBeLessThan(2);
      expect(e['mirror']).toBe('up-down');
      expect(e['mirror_axis_deg']).toBeUndefined();
    }
  });
});

describe('a line along z resolves only elevation: refused with exit 2', () => {
  it('a vertical pair', () => {
    const vertical = geometry('pair-vertical', [[0, 0, -0.1], [0, 0, 0.1]]);
    const wav = render(vertical, 0, 30);
    expectUsageFailure(runCli(['scan', wav, '--array', geometryFile(vertical)]), /line 90 degrees from horizontal: a line resolves only the angle .* lay the line within 60 degrees of horizontal, or add a mic off the line/);
  });
});

describe('arrays wider than a default frame (sox-made delays)', () => {
  // 3 m pair along x: delays up to 3 / 343 s = 420 samples at 48 kHz (far-field formula of
  // interface.md); with the 10 % margin the search reaches 464 samples, which a frame must hold
  // 4 times (the project's rule: 1856 -> 2048).
  const wide = geometry('pair-3m', [[-1.5, 0, 0], [1.5, 0, 0]]);
  it('the default frame grows to the smallest power of two holding 4 x the largest lag', () => {
    const setup = createAnalysis(wide, 48000, C, {});
    const lag = setup.model.maxLag[0]!;
    expect(lag).toBe(Math.ceil((3 / C) * 48000 * 1.1) + 1);
    expect(setup.options.frame).toBe(2048);
    expect(setup.options.frame).toBeGreaterThanOrEqual(4 * lag);
    expect(setup.options.frame / 2).toBeLessThan(4 * lag);
    // a 20 cm pair keeps the default frame
    expect(createAnalysis(geometry('pair-20cm', [[-0.1, 0, 0], [0.1, 0, 0]]), 48000, C, {}).options.frame).toBe(1024);
  });
  // The project's rule (src/analysis/analysis-options.ts, defaultFrame): the smallest power of
  // two of at least 20 ms; at 16 kHz 512 samples (the nearest power of two to 21 ms, 256, gave the
  // tracker hops of 8 ms and the motion matrix rendered at 16 kHz lost crossings and passes).
  it('the default frame is the smallest power of two of at least 20 ms at each common rate', () => {
    const pair = geometry('pair-20cm', [[-0.1, 0, 0], [0.1, 0, 0]]);
    const frames = [8000, 16000, 22050, 32000, 44100, 48000, 96000].map((rate) => createAnalysis(pair, rate, C, {}).options.frame);
    expect(frames).toEqual([256, 512, 512, 1024, 1024, 1024, 2048]);
    expect(createAnalysis(pair, 16000, C, {}).options.hop).toBe(256);
  });
  it('bearline scan finds the calls of a 3 m pair (frame grown to fit), azimuth within 0.5 deg', () => {
    const wav = render(wide, 55, 0, true);
    const r = runCli(['scan', wav, '--array', geometryFile(wide)]);
    expect(r.status, r.stderr).toBe(0);
    const events = jsonLines(r.stdout);
    console.log('3 m pair, source at 55:', events.map((e) => e['azimuth_deg']).join(', '));
    expect(events.length).toBeGreaterThanOrEqual(3);
    expect(events.length).toBeLessThanOrEqual(5);
    for (const e of events) expect(Math.abs((e['azimuth_deg'] as number) - 55)).toBeLessThan(0.5);
  });
  it('an explicit --frame too small for the array: exit 2 naming --frame and the smallest frame that fits', () => {
    const wav = render(wide, 55);
    expectUsageFailure(runCli(['scan', wav, '--array', geometryFile(wide), '--frame', '1024']), /--frame 1024 is too small for this array: .*give --frame 2048 or more/);
    expectUsageFailure(runCli(['scan', wav, '--spacing', '3', '--frame', '512']), /--frame 512 is too small/);
    expect(runCli(['scan', wav, '--array', geometryFile(wide), '--frame', '2048']).status).toBe(0);
  });
});

import { describe, expect, it } from 'vitest';
import type { Vec3 } from '../../src/geometry/vec3.js';
import { pathResponse } from '../../src/sim/render.js';
import { Fft, nextPow2 } from '../../src/sim/fft.js';
import { imageSources } from '../../src/sim/room.js';
import type { Room, WallAbsorption } from '../../src/sim/scene.js';
import { dist, numpy, sceneFrom, writeF32 } from './helpers.js';
import { tempDir } from '../helpers/temp-dir.js';

const C = 343;
const FS = 16000;

/** Sabine RT60 = 0.161 V / A and Eyring RT60 = 0.161 V / (-S ln(1 - mean alpha)) (any acoustics handbook), written out here. */
function handbookRt60(size: Vec3, a: WallAbsorption): { sabine: number; eyring: number } {
  const [x, y, z] = size;
  const areas = { west: y * z, east: y * z, south: x * z, north: x * z, floor: x * y, ceiling: x * y };
  let s = 0;
  let absorbed = 0;
  for (const w of Object.keys(areas) as (keyof WallAbsorption)[]) {
    s += areas[w];
    absorbed += areas[w] * a[w];
  }
  const v = x * y * z;
  return { sabine: (0.161 * v) / absorbed, eyring: (0.161 * v) / (-s * Math.log(1 - absorbed / s)) };
}

/**
 * The 1 kHz octave band (707 to 1414 Hz) of an impulse response, by zeroing FFT bins outside
 * it. Reverberation times are measured per octave band (common practice, no source); here it
 * also keeps out the low-frequency build-up of an image-source response, whose reflections all
 * have the same sign (Allen and Berkley high-pass their responses for the same reason).
 */
function octave1k(ir: Float64Array, fs: number): Float64Array {
  const size = nextPow2(ir.length + fs / 10);
  const fft = new Fft(size);
  const x = new Float64Array(size);
  x.set(ir);
  const spec = fft.complex();
  fft.forwardReal(x, spec);
  for (let k = 0; k < size; k++) {
    const f = (Math.min(k, size - k) * fs) / size;
    if (f < 707 || f > 1414) {
      spec[2 * k] = 0;
      spec[2 * k + 1] = 0;
    }
  }
  const out = fft.complex();
  fft.inverse(spec, out);
  return Float64Array.from({ length: ir.length }, (_, i) => out[2 * i]!);
}

/**
 * RT60 from an impulse response by Schroeder backward integration (M. R. Schroeder, "New method
 * of measuring reverberation time", JASA 37, 409-412, 1965; from memory): a straight line is
 * fitted to the energy decay curve from -5 to -25 dB and extended to -60 dB (T20).
 */
function schroederRt60(ir: Float64Array, fs: number): number {
  const edc = new Float64Array(ir.length);
  let acc = 0;
  for (let i = ir.length - 1; i >= 0; i--) {
    acc += ir[i]! * ir[i]!;
    edc[i] = acc;
  }
  const db = Array.from(edc, (e) => 10 * Math.log10(e / edc[0]!));
  const pts: [number, number][] = [];
  db.forEach((d, i) => {
    if (d <= -5 && d >= -25) pts.push([i / fs, d]);
  });
  const n = pts.length;
  const mx = pts.reduce((a, p) => a + p[0], 0) / n;
  const my = pts.reduce((a, p) => a + p[1], 0) / n;
  const slope = pts.reduce((a, p) => a + (p[0] - mx) * (p[1] - my), 0) / pts.reduce((a, p) => a + (p[0] - mx) ** 2, 0);
  return -60 / slope;
}

function uniform(alpha: number): WallAbsorption {
  return { west: alpha, east: alpha, south: alpha, north: alpha, floor: alpha, ceiling: alpha };
}

/**
 * Mean T20 (1 kHz octave) over three source and mic positions: one position pair is a
 * single sample of the room (averaging positions is common practice, no source).
 */
function meanRt60(room: Room, src: Vec3, mic: Vec3): number {
  let sum = 0;
  for (let k = 0; k < 3; k++) {
    const s: Vec3 = [src[0] + 0.37 * k, src[1] + 0.23 * k, src[2] + 0.11 * k];
    const m: Vec3 = [mic[0] - 0.29 * k, mic[1] - 0.31 * k, mic[2] - 0.13 * k];
    sum += schroederRt60(octave1k(roomResponse(room, s, m), FS), FS);
  }
  return sum / 3;
}

function roomResponse(room: Room, src: Vec3, mic: Vec3): Float64Array {
  const images = imageSources(room, src, mic, C, room.maxOrder, room.cutoffS);
  const { ir, start } = pathResponse(src, mic, images, C, FS);
  // Shift so that sample 0 is the emission time (the kernel's leading taps may fall before it).
  const full = new Float64Array(Math.max(0, start) + ir.length);
  if (start >= 0) full.set(ir, start);
  else full.set(ir.subarray(-start));
  return full;
}

/**
 * Rooms where the sound field is close to diffuse (near-cubic, absorption on all walls), the
 * condition under which Sabine's and Eyring's formulas hold. Measured decays fall within 15% of
 * one formula or the other (Eyring's is the shorter). A specular image-source model of an
 * elongated room, or of one with uneven absorption, decays more slowly than both (directions
 * that meet the hard or far walls lose less): see SLOW_ROOMS.
 */
const ROOMS: { name: string; size: Vec3; absorption: WallAbsorption; src: Vec3; mic: Vec3 }[] = [
  { name: 'cubic store 5 x 5 x 5 m, alpha 0.3', size: [5, 5, 5], absorption: uniform(0.3), src: [1.3, 1.1, 1.4], mic: [3.7, 3.9, 2.2] },
  { name: 'plant room 4.5 x 4 x 3.8 m, alpha 0.25', size: [4.5, 4, 3.8], absorption: uniform(0.25), src: [1.2, 2.8, 1.6], mic: [3.4, 1.1, 2.3] },
  { name: 'damped booth 4 x 4 x 3.6 m, alpha 0.5', size: [4, 4, 3.6], absorption: uniform(0.5), src: [1.1, 1.3, 1.5], mic: [2.9, 2.6, 1.9] },
];

/** Rooms far from diffuse: the specular model decays more slowly than Eyring predicts. */
const SLOW_ROOMS: { name: string; size: Vec3; absorption: WallAbsorption; src: Vec3; mic: Vec3 }[] = [
  { name: 'elongated room 8 x 4 x 2.7 m, alpha 0.3', size: [8, 4, 2.7], absorption: uniform(0.3), src: [1.4, 1.2, 1.3], mic: [6.1, 2.9, 1.5] },
  {
    name: 'hut 5 x 4.5 x 4 m, absorbent floor (0.4), walls 0.15, ceiling 0.25',
    size: [5, 4.5, 4],
    absorption: { west: 0.15, east: 0.15, south: 0.15, north: 0.15, floor: 0.4, ceiling: 0.25 },
    src: [1.5, 3.2, 1.2],
    mic: [3.6, 1.3, 1.6],
  },
];

describe('image-source rooms (Allen and Berkley, JASA 65(4), 1979)', () => {
  for (const r of ROOMS) {
    it(`${r.name}: mean Schroeder T20 (1 kHz octave, 3 positions) from 15% under Eyring to 15% over Sabine`, () => {
      const expected = handbookRt60(r.size, r.absorption);
      const room: Room = { sizeM: r.size, absorption: r.absorption, maxOrder: 500, cutoffS: 0.85 * expected.eyring, movingMaxOrder: 0 };
      const measured = meanRt60(room, r.src, r.mic);
      const errE = measured / expected.eyring - 1;
      const errS = measured / expected.sabine - 1;
      console.log(`${r.name}: measured ${measured.toFixed(3)} s, Eyring ${expected.eyring.toFixed(3)} s (${(100 * errE).toFixed(1)}%), Sabine ${expected.sabine.toFixed(3)} s (${(100 * errS).toFixed(1)}%)`);
      // Eyring is the shorter of the two; a near-diffuse specular room falls between them.
      expect(measured).toBeGreaterThan(0.85 * expected.eyring);
      expect(measured).toBeLessThan(1.15 * expected.sabine);
    });
  }

  for (const r of SLOW_ROOMS) {
    it(`${r.name}: decays 1.2 to 1.8 times slower than Eyring (specular shoebox, non-diffuse field; cf. E. A. Lehmann and A. M. Johansson, JASA 124(1), 2008, from memory)`, () => {
      const expected = handbookRt60(r.size, r.absorption);
      const room: Room = { sizeM: r.size, absorption: r.absorption, maxOrder: 500, cutoffS: 0.85 * expected.eyring, movingMaxOrder: 0 };
      const measured = meanRt60(room, r.src, r.mic);
      console.log(`${r.name}: measured ${measured.toFixed(3)} s, Eyring ${expected.eyring.toFixed(3)} s, ratio ${(measured / expected.eyring).toFixed(2)}`);
      expect(measured / expected.eyring).toBeGreaterThan(1.2);
      expect(measured / expected.eyring).toBeLessThan(1.8);
    });
  }

  // Target 0.4 s in a near-cubic room. By Sabine's inversion the rendered decay meets it within
  // 15%; by Eyring's (less absorption) the specular model decays slower, by 0 to 30%.
  for (const [formula, lo, hi] of [['sabine', 0.85, 1.15], ['eyring', 1.0, 1.3]] as const) {
    it(`a room given by rt60_s 0.4 s (${formula}) decays in ${lo} to ${hi} x 0.4 s (Schroeder T20, 1 kHz octave)`, () => {
      const scene = sceneFrom({
        sample_rate_hz: FS,
        duration_s: 1,
        array: { geometry: 'pair-20cm', position_m: [3.3, 2.6, 1.5] },
        sources: [{ name: 'clap', position_m: [1, 1, 1], signal: { type: 'noise' }, level: { dbfs_at_array: -20 } }],
        room: { size_m: [5, 5, 4.5], rt60_s: 0.4, rt60_formula: formula, max_order: 500, cutoff_s: 0.36 },
      });
      const room = scene.room!;
      // The absorption the scene derived, put back into the handbook formula, gives the target.
      expect(handbookRt60(room.sizeM, room.absorption)[formula]).toBeCloseTo(0.4, 9);
      const measured = meanRt60(room, [1, 1, 1], [3.3, 2.6, 1.5]);
      console.log(`rt60_s 0.4 by ${formula}: absorption ${room.absorption.west.toFixed(3)}, measured ${measured.toFixed(3)} s`);
      expect(measured / 0.4).toBeGreaterThan(lo);
      expect(measured / 0.4).toBeLessThan(hi);
    });
  }

  it('the direct path arrives at distance / c (peak located by numpy, 64x band-limited upsampling) and first-order images at their mirror distance', () => {
    const size: Vec3 = [6, 4, 3];
    const src: Vec3 = [1.3, 1.1, 1.4];
    const mic: Vec3 = [4.2, 2.9, 1.2];
    // Free field: only the direct path.
    const direct = roomResponse({ sizeM: size, absorption: uniform(0.3), maxOrder: 0, cutoffS: 1, movingMaxOrder: 0 }, src, mic);
    // Only the floor image: mirror of the source in z = 0 (common practice, no source).
    const floorOnly = roomResponse({ sizeM: size, absorption: { ...uniform(1), floor: 0.19 }, maxOrder: 1, cutoffS: 1, movingMaxOrder: 0 }, src, mic);
    const dir = tempDir('sim').dir;
    const pad = (x: Float64Array): Float64Array => {
      const y = new Float64Array(4096);
      y.set(x);
      return y;
    };
    const onlyImage = pad(floorOnly).map((v, i) => v - pad(direct)[i]!);
    const [tDirect, tImage] = numpy(writeF32(dir, 'ir.f32', [pad(direct), onlyImage]), 2, FS, 'peak');
    const rDirect = dist(src, mic);
    const rImage = dist([src[0], src[1], -src[2]], mic);
    expect(Math.abs(tDirect! - rDirect / C)).toBeLessThan(1e-6);
    expect(Math.abs(tImage! - rImage / C)).toBeLessThan(1e-6);
    // Energies: (1 / r)^2 for the direct sound, (1 - alpha) / r^2 for the image (the kernel's energy
    // hardly depends on the fractional part of the delay).
    const energy = (x: Float64Array): number => x.reduce((e, v) => e + v * v, 0);
    expect(energy(direct) * rDirect ** 2).toBeCloseTo(1, 1);
    expect((energy(onlyImage) * rImage ** 2) / (energy(direct) * rDirect ** 2)).toBeCloseTo(0.81, 1);
    console.log(`direct path: ${(1e6 * (tDirect! - rDirect / C)).toFixed(3)} us off distance / c; floor image ${(1e6 * (tImage! - rImage / C)).toFixed(3)} us`);
  });
});

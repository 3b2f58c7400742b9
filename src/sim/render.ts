/**
 * Render a scene to multichannel audio: a pure function (scene in, sample arrays out).
 *
 * Each source's emission signal is built on the sample grid (signals.ts). Each mic hears
 * every path (the direct sound and, in a room, the image sources of room.ts) delayed by
 * r / c exactly (band-limited fractional delay, fractional-delay.ts) and scaled by 1 / r
 * (r in metres; level references are at 1 m or at the array centre, see scene.ts).
 *  - fixed sources: one impulse response per mic (all paths), applied by FFT convolution;
 *  - moving sources: a per-sample delay: at output time t the mic hears the sound emitted at
 *    te with t = te + r(te) / c, read between samples through the same kernel (so Doppler
 *    shift follows from the geometry).
 */
import type { Vec3 } from '../geometry/vec3.js';
import { convolveAddMany } from './convolve.js';
import { addImpulse, HALF_TAPS, readAt } from './fractional-delay.js';
import { closestApproach, emissionTime, maxSpeed, MotionCursor } from './motion.js';
import { addNoise } from './noise.js';
import { childRng } from './rng.js';
import { DIRECT, imagePosition, imageSources, type ImageSource } from './room.js';
import { micScenePositions, type Scene, type Source } from './scene.js';
import { scheduleCalls, sourceSignal, type Call } from './signals.js';

export interface Rendered {
  /** One channel per mic, in channel order. */
  readonly channels: Float32Array[];
  /** The calls of each source (emission samples), in source order. */
  readonly calls: Call[][];
}

/** Called with the share of the work done, 0..1. */
export type ProgressFn = (done: number) => void;

export function sceneSamples(scene: Scene): number {
  return Math.max(1, Math.round(scene.durationS * scene.sampleRate));
}

/** The amplitude factor of a source: received RMS = factor / r during a call. */
export function sourceGain(source: Source, scene: Scene): number {
  if (source.level.kind === 'spl1m') return 10 ** ((source.level.db - scene.fullScaleDbSpl) / 20);
  return 10 ** (source.level.db / 20) * closestApproach(source.motion, scene.array.position);
}

/** The images (direct path first) rendered for a source. */
export function sourcePaths(source: Source, scene: Scene): ImageSource[] {
  const room = scene.room;
  if (!room) return [DIRECT];
  const mics = micScenePositions(scene.array);
  const centre = scene.array.position;
  const margin = Math.max(...mics.map((m) => Math.hypot(m[0] - centre[0], m[1] - centre[1], m[2] - centre[2])));
  if (source.motion.kind === 'fixed') {
    return imageSources(room, source.motion.position, centre, scene.speedOfSound, room.maxOrder, room.cutoffS, margin);
  }
  return imageSources(room, source.motion.points[0]!.position, centre, scene.speedOfSound, Math.min(room.maxOrder, room.movingMaxOrder), Infinity);
}

/** The impulse response from a fixed point to a mic over the given paths: taps from `start`. */
export function pathResponse(position: Vec3, mic: Vec3, paths: readonly ImageSource[], c: number, sampleRate: number): { ir: Float64Array; start: number } {
  const delays = paths.map((img) => {
    const p = img === DIRECT ? position : imagePosition(img, position);
    const r = Math.hypot(p[0] - mic[0], p[1] - mic[1], p[2] - mic[2]);
    return { at: (r / c) * sampleRate, gain: img.gain / r };
  });
  let lo = Infinity;
  let hi = -Infinity;
  for (const d of delays) {
    lo = Math.min(lo, d.at);
    hi = Math.max(hi, d.at);
  }
  const start = Math.floor(lo) - HALF_TAPS;
  const ir = new Float64Array(Math.ceil(hi) + HALF_TAPS + 1 - start);
  for (const d of delays) addImpulse(ir, d.at - start, d.gain);
  return { ir, start };
}

/** Per-sample moving-source rendering of one path to one mic, added to `out`. */
function renderMovingPath(signal: Float32Array, calls: readonly Call[], source: Source, path: ImageSource, mic: Vec3, scene: Scene, out: Float32Array): void {
  const fs = scene.sampleRate;
  const c = scene.speedOfSound;
  const cursor = new MotionCursor(source.motion);
  // The read position advances by at most 1 / (1 - v/c) samples per output sample.
  const slowest = Math.max(0.05, 1 - maxSpeed(source.motion) / c);
  let te = -Infinity;
  let callIdx = 0;
  for (let i = 0; i < out.length; i++) {
    const t = i / fs;
    const sol = emissionTime(cursor, path, mic, t, c, Number.isFinite(te) ? te + 1 / fs : t);
    te = sol.te;
    const at = te * fs;
    while (callIdx < calls.length && calls[callIdx]!.end + HALF_TAPS <= at) callIdx++;
    if (callIdx >= calls.length) break;
    const gap = calls[callIdx]!.start - HALF_TAPS - at;
    if (gap > 0) {
      // Silent until the next call: jump ahead without overshooting its first arrival.
      const skip = Math.floor(gap * slowest) - 1;
      if (skip > 0) {
        i += skip;
        te = -Infinity;
      }
      continue;
    }
    out[i] = out[i]! + (path.gain / Math.max(sol.r, 1e-3)) * readAt(signal, at);
  }
}

export function renderScene(scene: Scene, onProgress?: ProgressFn): Rendered {
  const fs = scene.sampleRate;
  const total = sceneSamples(scene);
  const mics = micScenePositions(scene.array);
  const channels = mics.map(() => new Float32Array(total));
  const allCalls: Call[][] = [];
  const steps = scene.sources.length * mics.length + 1;
  let done = 0;
  const tick = (): void => {
    done++;
    onProgress?.(done / steps);
  };
  scene.sources.forEach((source, si) => {
    const rng = childRng(scene.seed, si);
    const calls = scheduleCalls(source.schedule, fs, total, rng);
    allCalls.push(calls);
    const signal = sourceSignal(source.signal, calls, total, fs, source.schedule.rampS, sourceGain(source, scene), rng);
    const paths = sourcePaths(source, scene);
    if (source.motion.kind === 'fixed') {
      const position = source.motion.position;
      const responses = mics.map((mic) => pathResponse(position, mic, paths, scene.speedOfSound, fs));
      const start = Math.min(...responses.map((r) => r.start));
      const irs = responses.map((r) => {
        const h = new Float64Array(r.start - start + r.ir.length);
        h.set(r.ir, r.start - start);
        return h;
      });
      convolveAddMany(signal, irs, start, channels);
      mics.forEach(tick);
    } else {
      mics.forEach((mic, m) => {
        for (const path of paths) renderMovingPath(signal, calls, source, path, mic, scene, channels[m]!);
        tick();
      });
    }
  });
  if (scene.noise) addNoise(channels, scene.noise, fs, childRng(scene.seed, 1000));
  tick();
  return { channels, calls: allCalls };
}

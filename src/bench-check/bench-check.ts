/**
 * The bench check of an array, start to end: takes (audio of a source held at a known
 * direction) in, the fit of array-fit.ts out. Pure: the CLI reads the files.
 */
import { micPairs, type ArrayGeometry } from '../geometry/array-geometry.js';
import { norm, sub } from '../geometry/vec3.js';
import { fitBenchArray, type BenchFit, type BenchTake } from './array-fit.js';
import type { BenchCheckOptions } from './options.js';
import { measureTake, type DelaySearch } from './take-delays.js';

export interface TakeAudio {
  label: string;
  azimuthDeg: number;
  elevationDeg: number | null;
  /** Takes cut from one recording share its name (and its clock). */
  recording: string;
  channels: readonly Float32Array[];
  /** Sample span [start, end) of the take in its recording. */
  start: number;
  end: number;
}

/** The delay search that the options and the file geometry allow. */
export function delaySearch(geometry: ArrayGeometry, speedOfSound: number, sampleRate: number, opts: BenchCheckOptions): DelaySearch {
  const pairs = micPairs(geometry);
  const firstWindow = Float64Array.from(pairs, ([a, b]) => {
    const d = norm(sub(geometry.mics[a]!.position, geometry.mics[b]!.position));
    return ((d * (1 + opts.maxSpacingError)) / speedOfSound + opts.maxOffsetS) * sampleRate + 2;
  });
  return {
    sampleRate,
    pairs,
    firstWindow,
    trackWindow: Math.max(2, 2 * opts.maxDriftPpm * 1e-6 * opts.segmentS * sampleRate + 1),
    segmentSamples: Math.max(1, Math.round(opts.segmentS * sampleRate)),
    minFreqHz: opts.minFreqHz,
    maxFreqHz: opts.maxFreqHz,
  };
}

export function runBenchCheck(geometry: ArrayGeometry, speedOfSound: number, sampleRate: number, takes: readonly TakeAudio[], opts: BenchCheckOptions): BenchFit {
  const search = delaySearch(geometry, speedOfSound, sampleRate, opts);
  const widest = Math.max(...search.firstWindow);
  const measured: BenchTake[] = takes.map((t) => {
    const durationS = (t.end - t.start) / sampleRate;
    const largestLag = widest + opts.maxDriftPpm * 1e-6 * durationS * sampleRate;
    return {
      label: t.label,
      azimuthDeg: t.azimuthDeg,
      elevationDeg: t.elevationDeg,
      recording: t.recording,
      durationS,
      delays: measureTake(t.channels, t.start, t.end, search, largestLag),
    };
  });
  return fitBenchArray(geometry, speedOfSound, sampleRate, measured, opts);
}

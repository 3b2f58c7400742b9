/**
 * The bench check of an array, start to end: takes (audio of a source held at a known
 * direction) in, the fit of array-fit.ts out. Pure: the CLI reads the files.
 */
import { micPairs, type ArrayGeometry } from '../geometry/array-geometry.js';
import { norm, sub } from '../geometry/vec3.js';
import { fitBenchArray, type BenchFit, type BenchTake } from './array-fit.js';
import type { BenchCheckOptions } from './options.js';
import { measureTake, TakeMeasurer, type DelaySearch } from './take-delays.js';

export interface TakeInfo {
  label: string;
  azimuthDeg: number;
  elevationDeg: number | null;
  /** Takes cut from one recording share its name (and its clock). */
  recording: string;
}

/** A take held in memory. */
export interface TakeAudio extends TakeInfo {
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

/** A take read as it is measured (a WAV file in blocks): constant memory whatever its length. */
export interface StreamedTake extends TakeInfo {
  /** Samples per channel the take should hold. */
  frames: number;
  /** Its samples in order; a block's arrays may be reused by the next one. */
  blocks(): AsyncIterable<{ readonly channels: readonly Float32Array[]; readonly length: number }>;
}

/** The largest lag (samples) a take of `durationS` may reach: the widest first window plus the drift allowed over it. */
function largestLagOf(search: DelaySearch, opts: BenchCheckOptions, durationS: number): number {
  return Math.max(...search.firstWindow) + opts.maxDriftPpm * 1e-6 * durationS * search.sampleRate;
}

/**
 * The bench check over takes that stream (the CLI's WAV files). A take that ends early (a
 * truncated file; its reader warns) is measured over what it holds, and `onShort` is told.
 */
export async function runStreamedBenchCheck(
  geometry: ArrayGeometry,
  speedOfSound: number,
  sampleRate: number,
  channels: number,
  takes: readonly StreamedTake[],
  opts: BenchCheckOptions,
  onShort: (take: StreamedTake, gotFrames: number) => void = () => undefined,
): Promise<BenchFit> {
  const search = delaySearch(geometry, speedOfSound, sampleRate, opts);
  const measured: BenchTake[] = [];
  for (const t of takes) {
    const m = new TakeMeasurer(channels, t.frames, search, largestLagOf(search, opts, t.frames / sampleRate));
    for await (const block of t.blocks()) m.push(block.channels, 0, block.length);
    if (m.samplesTaken < t.frames) onShort(t, m.samplesTaken);
    measured.push({ label: t.label, azimuthDeg: t.azimuthDeg, elevationDeg: t.elevationDeg, recording: t.recording, durationS: m.samplesTaken / sampleRate, delays: m.finish() });
  }
  return fitBenchArray(geometry, speedOfSound, sampleRate, measured, opts);
}

export function runBenchCheck(geometry: ArrayGeometry, speedOfSound: number, sampleRate: number, takes: readonly TakeAudio[], opts: BenchCheckOptions): BenchFit {
  const search = delaySearch(geometry, speedOfSound, sampleRate, opts);
  const measured: BenchTake[] = takes.map((t) => {
    const durationS = (t.end - t.start) / sampleRate;
    const largestLag = largestLagOf(search, opts, durationS);
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

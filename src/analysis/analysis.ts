import type { AnalysisMeter } from './analysis-meter.js';
import type { DirectionModel } from '../direction/direction-model.js';
import { PairDirectionModel } from '../direction/pair-direction.js';
import { SrpDirectionModel } from '../direction/srp-search.js';
import { Framer } from '../dsp/framer.js';
import type { ArrayGeometry } from '../geometry/array-geometry.js';
import { micDistanceRange } from '../geometry/geometry-file.js';
import type { AudioSource, StreamGap } from '../sources/audio-source.js';
import { resolveAnalysisOptions, type AnalysisOptions, type ResolvedAnalysis } from './analysis-options.js';
import { HopAnalyzer, type HopResult } from './hop-analyzer.js';
import { StreamChecks } from './stream-checks.js';

export interface AnalysisSetup {
  analyzer: HopAnalyzer;
  model: DirectionModel;
  options: ResolvedAnalysis;
  geometry: ArrayGeometry;
  speedOfSound: number;
  /** Window-edge and geometry checks over the stream (said once). */
  checks: StreamChecks;
}

/**
 * Build the analysis for a geometry and a stream format. The frame is sized to hold the
 * array's largest delay (resolveAnalysisOptions); the direction model derives the array's
 * mirror from the geometry (a near-vertical line is refused there).
 */
export function createAnalysis(
  geometry: ArrayGeometry,
  sampleRate: number,
  speedOfSound: number,
  options: AnalysisOptions,
  where = 'the stream',
): AnalysisSetup {
  const resolved = resolveAnalysisOptions(options, sampleRate, { largestSpacingM: micDistanceRange(geometry).max, speedOfSound });
  let model: DirectionModel;
  if (geometry.mics.length === 2) {
    model = new PairDirectionModel(geometry, sampleRate, speedOfSound, resolved.lagMargin, resolved.frame);
  } else {
    model = new SrpDirectionModel(geometry, sampleRate, speedOfSound, resolved.lagMargin, resolved.frame, { pairs: resolved.searchPairs, topHz: resolved.maxFreqHz });
  }
  const analyzer = new HopAnalyzer(geometry.mics.length, sampleRate, model, resolved);
  const checks = new StreamChecks(geometry, model.pairs, model.maxLag, sampleRate, speedOfSound, where);
  return { analyzer, model, options: resolved, geometry, speedOfSound, checks };
}

/** Where a hop sits in the stream. One object, reused for every hop: read it in the callback. */
export interface HopTime {
  /** Stream time (s) of the hop's frame centre: the analyzer's time, shifted by the holes of a live stream. */
  timeS: number;
  /** Live streams: wall-clock ms of stream time 0 (the hop's UTC is epochMs + 1000 timeS); null for files. */
  epochMs: number | null;
}

export interface StreamHandlers {
  /** Every hop. May return a promise (a sink applying back-pressure): the next block is read only after it settles. */
  onHop(r: HopResult, time: HopTime): void | Promise<void>;
  /** A hole in a live stream (marked on the block after it), told before the hops after it. */
  onGap?(gap: StreamGap, epochMs: number): void | Promise<void>;
  onProgress?(framesDone: number): void;
  /** Checked after each block: true ends the run there (a stop signal), as if the stream had ended. */
  shouldStop?(): boolean;
  /** Times each hop (analysis and onHop's synchronous part) for the real-time factor on this machine. */
  meter?: AnalysisMeter;
}

/**
 * Drive an analysis from a source: blocks -> frames -> hop results. Live sources carry their
 * stream time on the blocks (sources/stream-clock.ts); a hop takes the time of the block that
 * completed its frame. Returns the number of hops.
 */
export async function runAnalysis(source: AudioSource, analyzer: HopAnalyzer, handlers: StreamHandlers): Promise<number> {
  const framer = new Framer(analyzer.channels, analyzer.frame, analyzer.hop, analyzer.inputFrames());
  const rate = analyzer.sampleRate;
  const meter = handlers.meter ?? null;
  const time: HopTime = { timeS: 0, epochMs: null };
  let offsetS = 0;
  let hops = 0;
  let done = 0;
  const pending: Promise<void>[] = [];
  const keep = (out: void | Promise<void>): void => {
    if (out) pending.push(out);
  };
  for await (const block of source.blocks()) {
    if (block.time) {
      offsetS = block.time.startS - done / rate;
      time.epochMs = block.time.epochMs;
      if (block.time.gapBefore) keep(handlers.onGap?.(block.time.gapBefore, block.time.epochMs));
    }
    framer.push(block.channels, block.length, (frames) => {
      const t0 = meter ? meter.start() : 0;
      const r = analyzer.process(frames);
      time.timeS = r.timeS + offsetS;
      keep(handlers.onHop(r, time));
      if (meter) meter.stop(t0);
      hops++;
    });
    if (pending.length) {
      await Promise.all(pending);
      pending.length = 0;
    }
    done += block.length;
    handlers.onProgress?.(done);
    if (handlers.shouldStop?.()) break;
  }
  return hops;
}

/** Analyse planar arrays held in memory (tests, the simulator's checks). */
export function analyzeArrays(setup: AnalysisSetup, channels: readonly Float32Array[], onHop: (r: HopResult) => void): void {
  const framer = new Framer(setup.analyzer.channels, setup.analyzer.frame, setup.analyzer.hop, setup.analyzer.inputFrames());
  framer.push(channels, channels[0]!.length, (frames) => onHop(setup.analyzer.process(frames)));
}

/**
 * Run a throwaway copy of an analysis over a second of generated noise, so the JIT has
 * compiled the hot paths before live audio arrives (the first seconds of a live run are
 * otherwise several times slower per hop). The given setup's own state is untouched.
 */
export function warmUp(setup: AnalysisSetup, sampleRate: number, seconds = 1): void {
  const copy = createAnalysis(setup.geometry, sampleRate, setup.speedOfSound, setup.options);
  const n = Math.round(seconds * sampleRate);
  let state = 12345;
  const noise = (): number => {
    state = (state * 1664525 + 1013904223) >>> 0;
    return state / 4294967296 - 0.5;
  };
  // a source straight ahead of the array (the same noise at every mic) plus mic self-noise
  const common = Float32Array.from({ length: n }, () => 0.1 * noise());
  const channels = Array.from({ length: setup.geometry.mics.length }, () => common.map((v) => v + 0.01 * noise()));
  analyzeArrays(copy, channels, () => undefined);
}

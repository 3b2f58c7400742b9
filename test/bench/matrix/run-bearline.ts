/**
 * bearline's side of the matrix, in-process: the same path as `bearline scan` (see
 * src/cli/recording-analysis.ts): createAnalysis, the Framer, TrackingSession, so frames and
 * events are what scan would write. This is the ONLY file of the matrix that touches the
 * analysis internals (they are being reworked); keep it that way.
 *
 * Settings come as `key=value` strings: keys of the analysis options
 * (src/analysis/analysis-options.ts) and of the tracker options (src/track/options.ts), read
 * through their own option specs (their command-line flag names work too, without "--").
 * A key both stages have (minConfidence) needs its stage: `analysis.minConfidence=0.4`.
 */
import { Framer } from '../../../src/dsp/framer.js';
import { UsageError } from '../../../src/util/errors.js';
import type { ArrayGeometry } from '../../../src/geometry/array-geometry.js';
import type { Vec3 } from '../../../src/geometry/vec3.js';
import { checkGeometryForStream } from '../../../src/geometry/geometry-file.js';
import { parseOptionText, type OptionSpec } from '../../../src/options/option-spec.js';
import { createAnalysis } from '../../../src/analysis/analysis.js';
import { analysisOptionSpecs, resolveAnalysisOptions, type AnalysisOptions } from '../../../src/analysis/analysis-options.js';
import { callbackSink } from '../../../src/sinks/record-sink.js';
import { TrackingSession } from '../../../src/track/tracking-session.js';
import { resolveTrackerOptions, trackerOptionSpecs, type TrackerOptions } from '../../../src/track/options.js';

export interface StageSettings {
  readonly analysis: AnalysisOptions;
  readonly tracker: Partial<TrackerOptions>;
  /** The assignments as given, for the report. */
  readonly given: readonly string[];
}

/** One hop as scan's frame record gives it (the strongest direction). */
export interface BearlineHop {
  readonly t: number;
  readonly az: number | null;
  readonly el: number | null;
  readonly conf: number;
  /** Delay of pair (0, 1), seconds; null without a direction. */
  readonly tdoa0: number | null;
  /** The confidence features of the hop's strongest candidate (src/analysis/confidence.ts), null when it had none. */
  readonly features: HopFeatures | null;
}

export interface HopFeatures {
  readonly agree: number;
  readonly share: number;
  readonly snrDb: number;
  readonly evidence: number;
  readonly apertureWaves: number;
  readonly onset: number;
  readonly fresh: number;
}

export interface BearlineEvent {
  readonly start: number;
  readonly end: number;
  readonly az: number;
  readonly el: number | null;
}

export interface BearlineRun {
  readonly hops: BearlineHop[];
  readonly events: BearlineEvent[];
  readonly frame: number;
  readonly hop: number;
}

type Stage = 'analysis' | 'tracker';

function flagName(spec: OptionSpec): string {
  return spec.name.replace(/^no-/, '');
}

function stageSpecs(): Record<Stage, readonly OptionSpec[]> {
  return { analysis: analysisOptionSpecs, tracker: trackerOptionSpecs };
}

/** Every settable key, per stage (for --help and error messages). */
export function settingKeys(): Record<Stage, string[]> {
  const s = stageSpecs();
  return { analysis: s.analysis.map((x) => x.key), tracker: s.tracker.map((x) => x.key) };
}

function parseValue(spec: OptionSpec, raw: string, assignment: string): unknown {
  try {
    // A switch's value is the setting itself (voting=false), not "given".
    return parseOptionText(spec, raw);
  } catch (err) {
    throw new UsageError(`--set ${assignment}: ${(err as Error).message}`);
  }
}

/** Parse `key=value` assignments into analysis and tracker options; unknown keys are an error. */
export function parseSettings(assignments: readonly string[]): StageSettings {
  const specs = stageSpecs();
  const analysis: Record<string, unknown> = {};
  const tracker: Record<string, unknown> = {};
  for (const a of assignments) {
    const eq = a.indexOf('=');
    if (eq <= 0) throw new UsageError(`--set ${a}: give key=value, e.g. --set memoryS=0.1`);
    let name = a.slice(0, eq).trim();
    const raw = a.slice(eq + 1).trim();
    let stages: Stage[] = ['analysis', 'tracker'];
    const dot = name.indexOf('.');
    if (dot > 0) {
      const stage = name.slice(0, dot);
      if (stage !== 'analysis' && stage !== 'tracker') throw new UsageError(`--set ${a}: the stage before the dot is "analysis" or "tracker"`);
      stages = [stage];
      name = name.slice(dot + 1);
    }
    const found = stages.flatMap((st) => specs[st].filter((s) => s.key === name || flagName(s) === name).map((s) => ({ st, s })));
    if (found.length === 0) {
      const keys = settingKeys();
      throw new UsageError(`--set ${a}: unknown key "${name}". Analysis keys: ${keys.analysis.join(', ')}. Tracker keys: ${keys.tracker.join(', ')}.`);
    }
    if (found.length > 1) throw new UsageError(`--set ${a}: "${name}" is a key of both stages: write analysis.${found[0]!.s.key} or tracker.${found[0]!.s.key}`);
    const { st, s } = found[0]!;
    (st === 'analysis' ? analysis : tracker)[s.key] = parseValue(s, raw, a);
  }
  // Validate now (one clear message before any work); the stream's rate is checked again per cell.
  resolveAnalysisOptions(analysis as AnalysisOptions, 48000);
  resolveTrackerOptions(tracker as Partial<TrackerOptions>, '--set');
  return { analysis: analysis as AnalysisOptions, tracker: tracker as Partial<TrackerOptions>, given: [...assignments] };
}

/** bearline's default frame and hop at a rate (the baseline uses the same). */
export function defaultFrameHop(sampleRate: number): { frame: number; hop: number; lagMargin: number } {
  const r = resolveAnalysisOptions({}, sampleRate);
  return { frame: r.frame, hop: r.hop, lagMargin: r.lagMargin };
}

/** Analyse planar sample arrays as `bearline scan --frames` and the default event output would. */
export function runBearline(mics: readonly Vec3[], sampleRate: number, speedOfSound: number, channels: readonly Float32Array[], settings: StageSettings): BearlineRun {
  const geometry: ArrayGeometry = { name: 'matrix', headingDeg: null, mics: mics.map((position, channel) => ({ channel, position })) };
  checkGeometryForStream(geometry, channels.length, sampleRate, speedOfSound, 'matrix cell');
  const setup = createAnalysis(geometry, sampleRate, speedOfSound, settings.analysis);
  const hops: BearlineHop[] = [];
  const events: BearlineEvent[] = [];
  const session = TrackingSession.of(
    setup,
    settings.tracker,
    callbackSink('the matrix', {
      frame: (f) => {
        hops.push({ t: f.time_s, az: f.azimuth_deg, el: f.elevation_deg, conf: f.confidence, tdoa0: f.tdoa_s[0] ?? null, features: null });
      },
      event: (e) => {
        events.push({ start: e.start_s, end: e.end_s, az: e.azimuth_deg, el: e.elevation_deg ?? null });
      },
    }),
  );
  const features: (HopFeatures | null)[] = [];
  const framer = new Framer(setup.analyzer.channels, setup.analyzer.frame, setup.analyzer.hop, setup.analyzer.inputFrames());
  framer.push(channels as Float32Array[], channels[0]!.length, (frames) => {
    const r = setup.analyzer.process(frames);
    features.push(r.sourceCount > 0 ? { agree: r.agree, share: r.share, snrDb: r.snrDb, evidence: r.evidence, apertureWaves: r.apertureWaves, onset: r.onset, fresh: r.fresh } : null);
    void session.hop(r);
  });
  hops.forEach((h, i) => ((h as { features: HopFeatures | null }).features = features[i] ?? null));
  void session.finish();
  // one analysis per cell: its FFT buffers go back for the next cell's
  setup.analyzer.release();
  return { hops, events, frame: setup.analyzer.frame, hop: setup.analyzer.hop };
}

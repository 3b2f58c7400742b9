/**
 * Analyse a WAV recording through the same path as `bearline scan` (createAnalysis,
 * runAnalysis, TrackingSession), for the commands that replay recordings (accuracy, demo).
 */
import { UsageError } from '../util/errors.js';
import type { ArrayGeometry } from '../geometry/array-geometry.js';
import { checkGeometryForStream } from '../geometry/geometry-file.js';
import { stderrWarning } from '../util/stderr-warning.js';
import { replaySource, type ReplayControls } from '../sources/replay-source.js';
import { openWavSource } from '../sources/wav-source.js';
import { createAnalysis, runAnalysis, type AnalysisSetup } from '../analysis/analysis.js';
import type { RecordSink } from '../sinks/record-sink.js';
import type { HopResult } from '../analysis/hop-analyzer.js';
import { evidenceTap } from '../feed/evidence-tap.js';
import type { FeedServer } from '../feed/feed-server.js';
import { TrackingSession } from '../track/tracking-session.js';
import type { AnalysisOptions } from '../analysis/analysis-options.js';
import type { TrackerOptions } from '../track/options.js';
import { createProgress } from './progress.js';

export interface RecordingAnalysis {
  readonly wav: string;
  readonly geometry: ArrayGeometry;
  readonly speedOfSound: number;
  readonly stages: { analysis: AnalysisOptions; tracker: Partial<TrackerOptions> };
  /** Frame records carry the viewer's fields (levels, band votes). */
  readonly viewerFields?: boolean;
  /** Where the frame and event records go. */
  readonly sink: RecordSink;
  /** Told the analysis setup before the first hop (e.g. to size a tap on the blocks). */
  readonly onSetup?: (setup: AnalysisSetup) => ReplayControls;
  /** Show a progress bar on a terminal. */
  readonly progress?: boolean;
  /** A live feed that gets the evidence maps of the hops when a viewer asks (feed/evidence-tap.ts). */
  readonly evidenceTo?: FeedServer | null;
}

export interface RecordingResult {
  setup: AnalysisSetup;
  session: TrackingSession;
  hops: number;
  sampleRate: number;
}

export async function analyseRecording(job: RecordingAnalysis): Promise<RecordingResult> {
  const source = await openWavSource(job.wav, { onWarning: stderrWarning });
  try {
    const { sampleRate, channels, totalFrames } = source.format;
    if (channels < 2) throw new UsageError(`${job.wav} has one channel: direction finding needs at least two (one per mic)`);
    checkGeometryForStream(job.geometry, channels, sampleRate, job.speedOfSound, job.wav);
    const setup = createAnalysis(job.geometry, sampleRate, job.speedOfSound, job.stages.analysis, job.wav);
    const session = TrackingSession.of(setup, job.stages.tracker, job.sink, { viewerFields: !!job.viewerFields, onWarning: stderrWarning });
    const controls = job.onSetup?.(setup) ?? {};
    const progress = job.progress ? createProgress(`scanning ${job.wav}`, totalFrames, sampleRate) : null;
    let hops: number;
    try {
      const tap = job.evidenceTo ? evidenceTap(job.evidenceTo, setup) : null;
      const onHop = (r: HopResult): ReturnType<TrackingSession['hop']> => {
        const out = session.hop(r);
        tap?.(r.timeS);
        return out;
      };
      hops = await runAnalysis(replaySource(source, controls), setup.analyzer, { onHop, onProgress: (done) => progress?.update(done) });
      await session.finish();
    } finally {
      progress?.finish();
    }
    return { setup, session, hops, sampleRate };
  } finally {
    await source.close();
  }
}

import { existsSync, readFileSync } from 'node:fs';
import type { Command } from 'commander';
import { CoherenceMeter } from '../accuracy/coherence.js';
import { effectiveObservationS } from '../accuracy/observation.js';
import { formatAccuracyReport } from '../accuracy/report-text.js';
import { scoreHops, type AccuracyReport } from '../accuracy/score.js';
import { indexTruth, parseTruth } from '../accuracy/truth.js';
import { Framer } from '../dsp/framer.js';
import { UsageError } from '../util/errors.js';
import { loadGeometryFile } from '../geometry/geometry-file.js';
import type { FrameRecord } from '../records/record-types.js';
import { callbackSink } from '../sinks/record-sink.js';
import { addAnalysisOptions, resolveStageSettings } from './analysis-flags.js';
import { flagOption, textOption, type OptionSpec } from '../options/option-spec.js';
import { resolveArray, resolveSpeed } from './geometry-option.js';
import { addOptions, readOptions } from './options.js';
import { analyseRecording } from './recording-analysis.js';
import { action } from './run-command.js';
import { accuracyReportJson } from '../accuracy/report-json.js';

interface AccuracyValues {
  truth: string | null;
  json: boolean;
}

const accuracyOptionSpecs: readonly OptionSpec<keyof AccuracyValues>[] = [
  textOption('truth', 'truth', 'file.jsonl', null, 'truth records', { defaultText: 'REC.truth.jsonl beside the recording' }),
  flagOption('json', 'json', false, 'write the figures as one JSON object instead of the readable report'),
];

/** REC.wav -> REC.truth.jsonl, REC.array.json (the files `bearline simulate` writes beside it). */
export function companionPaths(wav: string): { truth: string; array: string } {
  if (!/\.wav$/i.test(wav)) throw new UsageError(`${wav} must be a .wav file written by bearline simulate (its truth is read from REC.truth.jsonl beside it)`);
  const stem = wav.slice(0, -4);
  return { truth: `${stem}.truth.jsonl`, array: `${stem}.array.json` };
}

export interface AccuracyOutcome {
  report: AccuracyReport;
  observationS: number;
  frames: FrameRecord[];
}

/** Scan a recording like `bearline scan --frames` and score it against its truth. */
export async function measureAccuracy(wav: string, cmd: Command): Promise<AccuracyOutcome & { truthPath: string }> {
  const flags = readOptions<AccuracyValues>(cmd, accuracyOptionSpecs);
  const stages = resolveStageSettings(cmd);
  const paths = companionPaths(wav);
  const truthPath = flags.truth ?? paths.truth;
  if (!existsSync(truthPath)) throw new UsageError(`no truth file ${truthPath}: render the recording with bearline simulate, or give --truth FILE`);
  const given = stages.array.spacing !== undefined || stages.array.array !== undefined;
  if (!given && !existsSync(paths.array)) throw new UsageError(`no array file ${paths.array}: give the array with --array FILE.json or --spacing D`);
  const geometry = given ? resolveArray(stages.array) : loadGeometryFile(paths.array);
  const c = resolveSpeed(stages.array);
  const truth = indexTruth(parseTruth(readFileSync(truthPath, 'utf8'), truthPath));
  if (truth.sources.length === 0) {
    throw new UsageError(`truth file ${truthPath} holds no source: there is nothing to score against; render the recording with bearline simulate, or give the --truth FILE that belongs to it`);
  }
  const fixed = new Set(truth.sources.filter((s) => s.fixed).map((s) => s.name));
  const frames: FrameRecord[] = [];
  let meter: CoherenceMeter | null = null;
  const result = await analyseRecording({
    wav,
    geometry,
    speedOfSound: c,
    stages,
    progress: true,
    sink: callbackSink('the accuracy score', { frame: (rec) => void frames.push(rec) }),
    onSetup: (setup) => {
      const { frame, hop } = setup.options;
      const fs = setup.analyzer.sampleRate;
      const m = new CoherenceMeter(geometry.mics.length, frame, fs, setup.model.pairs);
      meter = m;
      const framer = new Framer(geometry.mics.length, frame, hop);
      let index = 0;
      return {
        onBlock: (block) =>
          framer.push(block.channels, block.length, (f) => {
            const active = truth.activeAt((index++ * hop + frame / 2) / fs);
            if (active.length === 1 && fixed.has(active[0]!.source)) m.add(active[0]!.source, f);
          }),
      };
    },
  });
  const { frame, hop, memoryS } = result.setup.options;
  const observationS = effectiveObservationS(frame, hop, memoryS, result.sampleRate);
  const m = meter as CoherenceMeter | null;
  const report = scoreHops(frames, truth, {
    geometry,
    pairs: result.setup.model.pairs,
    speedOfSound: c,
    delayBound: (source, p) => m?.delayBound(source, p, observationS) ?? null,
  });
  return { report, observationS, frames, truthPath };
}

export function registerAccuracy(program: Command): void {
  const cmd = program
    .command('accuracy')
    .summary('score a scan of a simulated recording against its true directions')
    .description(
      'Scan REC.wav (as bearline scan does, with the same options) and compare each hop with the true ' +
        'directions in REC.truth.jsonl beside it (written by bearline simulate), using the array in REC.array.json. ' +
        'Reports the share of voiced hops (a true source active) within 2, 5 and 10 degrees of an active source, ' +
        'the median and 90th-percentile error, and for fixed sources heard alone the RMS delay error per mic pair ' +
        'against the Cramer-Rao bound of Knapp and Carter (1976), from the coherence measured in the recording.',
    )
    .argument('<rec.wav>', 'recording written by bearline simulate');
  addOptions(cmd, accuracyOptionSpecs);
  addAnalysisOptions(cmd);
  cmd.addHelpText(
    'after',
    '\nThe array defaults to REC.array.json; --array or --spacing override it. The scene\'s speed of sound is not\n' +
      'in the recording: give --temperature C (or --speed-of-sound) as in the scene, or 343 m/s is assumed.\n' +
      '\nExamples:\n' +
      '  bearline simulate --out dusk.wav && bearline accuracy dusk.wav --temperature 14\n' +
      '  bearline accuracy room.wav --onset-weight 0 --memory 0 --no-voting --json\n',
  );
  cmd.action(
    action(async (file: string) => {
      const flags = readOptions<AccuracyValues>(cmd, accuracyOptionSpecs);
      const out = await measureAccuracy(file, cmd);
      if (flags.json) {
        process.stdout.write(JSON.stringify({ recording: file, truth: out.truthPath, observation_s: out.observationS, ...accuracyReportJson(out.report) }) + '\n');
      } else {
        process.stdout.write(formatAccuracyReport(out.report, { recording: file, truth: out.truthPath, observationS: out.observationS, coherenceFrom: 'measured in the recording' }));
      }
    }),
  );
}

import { existsSync } from 'node:fs';
import type { Command } from 'commander';
import { UsageError } from '../util/errors.js';
import { feedOptionSpecs, type FeedOptions } from '../feed/feed-options.js';
import { evidenceTap } from '../feed/evidence-tap.js';
import { startFeedServer, type FeedServer } from '../feed/feed-server.js';
import type { ArrayGeometry } from '../geometry/array-geometry.js';
import { checkGeometryForStream } from '../geometry/geometry-file.js';
import type { AudioSource } from '../sources/audio-source.js';
import { pacedSource, paceOptionSpecs } from '../sources/paced-source.js';
import { openPcmStreamSource } from '../sources/pcm-stream-source.js';
import { abandonOnSignal, planOutput, type OutputTarget } from '../sinks/output-target.js';
import { countingSink, describeCounts, fanOut } from '../sinks/record-sink.js';
import { stopOnSignal } from '../station/stop-signal.js';
import { RecordWriter, type RecordFormat } from '../sinks/record-writer.js';
import { replacedSamplesLine } from '../sources/replaced-samples-report.js';
import { stderrWarning } from '../util/stderr-warning.js';
import { openWavSource } from '../sources/wav-source.js';
import { createAnalysis, runAnalysis, type AnalysisSetup } from '../analysis/analysis.js';
import { eventColumns } from '../records/event-columns.js';
import { frameColumns } from '../records/frame-columns.js';
import { TrackingSession } from '../track/tracking-session.js';
import { formatSummaryTable } from '../track/summary-table.js';
import { AnalysisMeter, formatRealTimeFactor } from '../analysis/analysis-meter.js';
import { choiceOption, flagOption, textOption, withDefault, type OptionSpec } from '../options/option-spec.js';
import { CHANNELS_SPEC, RATE_SPEC } from '../sources/stream-options.js';
import { resolveArray, resolveSpeed } from './geometry-option.js';
import { addAnalysisOptions, resolveStageSettings } from './analysis-flags.js';
import { addOptions, readOptions } from './options.js';
import { addFeedOptions, resolveServe } from './serve-flags.js';
import { createProgress } from './progress.js';
import { action } from './run-command.js';
import { maskToken } from '../util/mask-token.js';

interface ScanValues {
  frames: boolean;
  summary: boolean;
  format: RecordFormat;
  out: string | null;
  stdin: boolean;
  sampleRate: number | null;
  channels: number | null;
  diagnostics: boolean;
  viewerFields: boolean;
  serve: boolean;
  speed: number;
}

const scanOptionSpecs: readonly OptionSpec<keyof ScanValues>[] = [
  flagOption('frames', 'frames', false, 'write one frame record per hop instead of event records'),
  flagOption('summary', 'summary', false, 'print a table per track at the end (on stderr)'),
  choiceOption('format', 'format', ['jsonl', 'csv'], 'jsonl', 'output format'),
  textOption('out', 'out', 'path', null, 'write to a file instead of stdout (written aside, renamed over PATH only when complete; a FIFO or device is written straight through)', { defaultText: 'stdout', short: 'o' }),
  flagOption('stdin', 'stdin', false, 'read raw interleaved s16le PCM from stdin (needs --rate and --channels)'),
  withDefault(RATE_SPEC, null, 'none: give it with --stdin'),
  withDefault(CHANNELS_SPEC, null, 'none: give it with --stdin'),
  flagOption('diagnostics', 'diagnostics', false, 'frame records: add per-pair diagnostics (tdoa, peak height, band agreement)'),
  flagOption('viewerFields', 'viewer-fields', false, 'frame records: add per-channel levels and the band vote'),
];

const SCAN_SERVE_SPEC = flagOption('serve', 'serve', false, 'replay into the live polar view at real-time pace (see --speed, --feed-*); starts when a viewer connects');

export function registerScan(program: Command): void {
  const cmd = program
    .command('scan')
    .summary('find sound directions and calls in a recording or a raw stream')
    .description(
      'Find sound directions in a WAV recording of any length (or raw s16le PCM on stdin), follow the\n' +
        'sources over time and cut their calls into events.\n' +
        'Default output: event records as JSON Lines, one per call (start_s, end_s, azimuth_deg, spread_deg,\n' +
        'confidence, track). --frames gives one frame record per hop instead (time_s, azimuth_deg, elevation_deg,\n' +
        'confidence, tdoa_s, level_dbfs, sources with their track ids).',
    )
    .argument('[file]', 'WAV file (PCM 8/16/24/32-bit or float, 1 to 8 channels); omit with --stdin');
  addOptions(cmd, scanOptionSpecs);
  addAnalysisOptions(cmd);
  addOptions(cmd, [SCAN_SERVE_SPEC, ...paceOptionSpecs]);
  addFeedOptions(cmd);
  cmd.addHelpText(
    'after',
    '\nExamples:\n' +
      '  bearline scan night.wav --spacing 0.2 > night.events.jsonl\n' +
      '  bearline scan pond.wav --array square-10cm --frames --format csv --out pond-frames.csv\n' +
      '  bearline scan pond.wav --array my-array.json --profile frog-chorus --summary\n' +
      '  bearline scan pond.wav --array square-10cm --serve --speed 4   (then open the printed URL)\n' +
      '  arecord -f S16_LE -r 48000 -c 2 -t raw | bearline scan --stdin --rate 48000 --channels 2 --spacing 0.2\n',
  );
  cmd.action(action(async (file: string | undefined) => scan(file, cmd)));
}

async function openSource(file: string | undefined, v: ScanValues, blockFrames?: number): Promise<AudioSource> {
  if (v.stdin) {
    if (file !== undefined) throw new UsageError('give either a FILE or --stdin, not both');
    if (v.sampleRate === null || v.channels === null) {
      throw new UsageError('--stdin needs --rate R and --channels N (the raw stream carries no header)');
    }
    return openPcmStreamSource(process.stdin, { sampleRate: v.sampleRate, channels: v.channels, blockFrames, onWarning: stderrWarning });
  }
  if (file === undefined) throw new UsageError('give a WAV file to scan, or --stdin for raw PCM');
  if (v.sampleRate !== null || v.channels !== null) {
    throw new UsageError('--rate and --channels are for --stdin; a WAV file says its own rate and channels');
  }
  return openWavSource(file, { blockFrames, onWarning: stderrWarning });
}

async function scan(file: string | undefined, cmd: Command): Promise<void> {
  // Every option is checked, and the output planned, before the input is read or anything is written.
  const v: ScanValues = { ...readOptions<ScanValues>(cmd, [...scanOptionSpecs, SCAN_SERVE_SPEC, ...paceOptionSpecs]) };
  const stages = resolveStageSettings(cmd);
  const geometry = resolveArray(stages.array);
  const c = resolveSpeed(stages.array);
  const feedOptions = resolveServe(cmd, v.serve, [...paceOptionSpecs, ...feedOptionSpecs]);
  const inputs = file ? [file] : [];
  const target = v.out === null || v.out === '-' ? null : planOutput('--out', v.out, inputs);
  // Served replays go in small blocks, so that the paced frames flow evenly (about 21 ms at 48 kHz).
  const opened = await openSource(file, v, feedOptions ? SERVE_BLOCK_FRAMES : undefined);
  const source = feedOptions ? pacedSource(opened, v.speed) : opened;
  let feed: FeedServer | null = null;
  let stopAt: { signal: NodeJS.Signals; s: number } | null = null;
  try {
    const { sampleRate, channels, totalFrames } = source.format;
    const where = file ?? 'the stdin stream';
    if (channels < 2) throw new UsageError(`${where} has one channel: direction finding needs at least two (one per mic)`);
    checkGeometryForStream(geometry, channels, sampleRate, c, where);
    const setup = createAnalysis(geometry, sampleRate, c, stages.analysis, where);
    setup.analyzer.diagnostics = v.diagnostics;
    if (feedOptions) feed = await startViewerFeed(feedOptions, setup.geometry, sampleRate, setup.options.hop);
    // From here on, any failure (or Ctrl-C) abandons the partial file: the old file at --out stays as it was.
    // Records that go straight out (stdout, a FIFO, a device) are final as they are written: there a
    // stop signal ends the scan like the end of the input, so the call in progress and every record
    // before it are written (stop-signal.ts). The signals are taken before the partial file is
    // made, so that no Ctrl-C can find it made and not yet looked after.
    const stop = target && !target.through ? null : stopOnSignal(() => (v.stdin ? opened.close() : undefined));
    const undoSignals = target && !target.through ? abandonOnSignal(target) : () => stop?.dispose();
    let writer: RecordWriter;
    try {
      writer = openWriter(target, v, setup);
    } catch (err) {
      undoSignals();
      throw err;
    }
    try {
      const { sink: counted, counts } = countingSink(writer);
      const sink = feed ? fanOut([counted, feed]) : counted;
      const session = TrackingSession.of(setup, stages.tracker, sink, { diagnostics: v.diagnostics, viewerFields: v.viewerFields || feed !== null, onWarning: stderrWarning });
      const progress = createProgress(`scanning ${file ?? 'stdin'}`, totalFrames, sampleRate);
      let hops: number;
      const meter = new AnalysisMeter(setup.options.hop / sampleRate);
      try {
        const tap = feed ? evidenceTap(feed, setup) : null;
        let doneFrames = 0;
        hops = await runAnalysis(source, setup.analyzer, {
          onHop: (r, time) => {
            const out = session.hop(r, time);
            tap?.(time.timeS);
            return out;
          },
          onProgress: (done) => {
            doneFrames = done;
            progress.update(done);
          },
          shouldStop: () => stop?.signal !== null && stop?.signal !== undefined,
          meter,
        });
        await session.finish();
        if (stop?.signal) stopAt = { signal: stop.signal, s: doneFrames / sampleRate };
      } finally {
        progress.finish();
      }
      if (hops === 0 && !stopAt) stderrWarning(`${where} is shorter than one analysis frame (${setup.options.frame} samples): no records`);
      await writer.close();
      if (stopAt) {
        const of = totalFrames === null ? '' : ` of ${(totalFrames / sampleRate).toFixed(1)} s`;
        process.stderr.write(`bearline: ${stopAt.signal}: stopped at ${stopAt.s.toFixed(1)} s${of}; wrote ${describeCounts(counts)} to ${writer.name} (the call in progress was cut there)\n`);
      }
      if (v.summary) {
        process.stderr.write(formatSummaryTable(session.summary()) + '\n');
        const rt = formatRealTimeFactor(meter.realTimeFactor());
        if (rt !== null) process.stderr.write(`analysis: ${meter.audioS.toFixed(1)} s of audio in ${(meter.busyMs / 1000).toFixed(2)} s, ${rt} on this machine (analysis and tracking per hop)\n`);
        const replaced = opened.replacedSamples?.();
        const line = replaced ? replacedSamplesLine(where, replaced) : null;
        if (line) process.stderr.write(line + '\n');
        for (const w of session.warnings()) process.stderr.write(`warning: ${w}\n`);
      }
    } catch (err) {
      await writer.abandon();
      if (target && !target.through) stderrWarning(existsSync(target.target) ? `the run stopped, so ${target.path} was not replaced (it keeps its old contents)` : `the run stopped, so nothing was written to ${target.path}`);
      throw err;
    } finally {
      undoSignals();
    }
  } finally {
    await feed?.close();
    await source.close();
  }
  // A stopped scan is not a complete one: exit 128 + the signal's number (the shell's convention).
  if (stopAt) process.exitCode = stopAt.signal === 'SIGINT' ? 130 : 143;
}

const SERVE_BLOCK_FRAMES = 1024;

/** Frame records with --frames, else event records; JSON Lines or CSV. */
function openWriter(target: OutputTarget | null, v: ScanValues, setup: AnalysisSetup): RecordWriter {
  if (v.format === 'jsonl') return RecordWriter.jsonLines(target, v.frames ? { frames: true } : { events: true });
  if (v.frames) return RecordWriter.csvFrames(target, frameColumns(setup.model.pairs, setup.geometry.headingDeg !== null));
  return RecordWriter.csvEvents(target, eventColumns());
}

/** Start the viewer's feed and wait for the first viewer, so that it sees the replay from its start. */
async function startViewerFeed(options: FeedOptions, geometry: ArrayGeometry, sampleRate: number, hop: number): Promise<FeedServer> {
  const feed = await startFeedServer({ ...options, geometry, settings: { source: 'replay', sample_rate_hz: sampleRate, hop_s: hop / sampleRate } });
  process.stderr.write(`bearline: live view at ${maskToken(feed.url)} (feed ${maskToken(feed.feedUrl)}); the replay starts when a viewer connects${options.token ? ' (the token is masked: put in the one you gave)' : ''}\n`);
  while (feed.stats().clients === 0) await new Promise((r) => setTimeout(r, 50));
  return feed;
}

import type { Command } from 'commander';
import { RuntimeFailure, UsageError } from '../util/errors.js';
import { feedOptionSpecs, type FeedOptions } from '../feed/feed-options.js';
import type { FeedSettings } from '../feed/feed-protocol.js';
import { startFeedServer } from '../feed/feed-server.js';
import { checkGeometryForStream } from '../geometry/geometry-file.js';
import type { AudioSource } from '../sources/audio-source.js';
import { DEFAULT_MQTT_QUEUE_DIR, mqttOptionSpecs, resolveMqttOptions, type MqttOptions } from '../sinks/mqtt-options.js';
import { MqttSink } from '../sinks/mqtt-sink.js';
import { openPcmStreamSource } from '../sources/pcm-stream-source.js';
import { RecordLog } from '../sinks/record-log.js';
import { recordLogOptionSpecs, resolveRecordLogOptions, type RecordLogOptions } from '../sinks/record-log-options.js';
import { checkFolderOption, planOutput, type OutputTarget } from '../sinks/output-target.js';
import { RecordWriter } from '../sinks/record-writer.js';
import { RECORDER_OPTION_SPECS, resolveRecorderOptions, type RecorderOptions } from '../sources/recorder-options.js';
import { openRecorderSource, type RecorderGap, type RecorderSource } from '../sources/recorder-source.js';
import { stderrWarning } from '../util/stderr-warning.js';
import { createAnalysis, runAnalysis, warmUp, type AnalysisSetup } from '../analysis/analysis.js';
import { frameColumns } from '../records/frame-columns.js';
import { captureGapOf, gapRecord, type GapRecord } from '../records/gap-record.js';
import type { HopResult } from '../analysis/hop-analyzer.js';
import { StreamClock } from '../sources/stream-clock.js';
import { TrackingSession } from '../track/tracking-session.js';
import type { EventRecord, FrameRecord } from '../records/record-types.js';
import { startHealthServer } from '../station/health-server.js';
import { flagOption, textOption, type OptionSpec } from '../options/option-spec.js';
import { resolveStationOptions, stationOptionSpecs, type StationOptions } from '../station/runtime-options.js';
import { installShutdown, type StationSink } from '../station/shutdown.js';
import { StatusMonitor } from '../station/status.js';
import { addAnalysisOptions, resolveStageSettings, sectionSettings } from './analysis-flags.js';
import { resolveArray, resolveSpeed } from './geometry-option.js';
import { addOptions, givenFlags, givenOptions, readOptions, refuseStray } from './options.js';
import { action, failAndExit } from './run-command.js';
import { addFeedOptions, resolveServe, SERVE_SPEC } from './serve-flags.js';

interface ListenValues {
  stdin: boolean;
  frames: boolean;
  out: string | null;
  quiet: boolean;
  serve: boolean;
}

const listenOptionSpecs: readonly OptionSpec<keyof ListenValues>[] = [
  flagOption('stdin', 'stdin', false, 'read raw interleaved s16le PCM from stdin instead of a recorder (needs --rate and --channels)'),
  flagOption('frames', 'frames', false, 'also write one frame record per hop to stdout'),
  textOption('out', 'out', 'file', null, 'write the records to this file instead of stdout (written aside, renamed over FILE when listen stops cleanly; a FIFO or device is written straight through)', { defaultText: 'stdout', short: 'o' }),
  flagOption('quiet', 'quiet', false, 'write no records to stdout (use with --log-dir, --mqtt or --serve)'),
  SERVE_SPEC,
];

type LiveRecord = FrameRecord | EventRecord | GapRecord;

/** Recorder options that mean nothing for a raw stream on stdin. */
const RECORDER_ONLY_KEYS: readonly (keyof RecorderOptions)[] = ['recorder', 'device', 'stallTimeoutS', 'maxRestarts'];

export function registerListen(program: Command): void {
  const cmd = program
    .command('listen')
    .summary('track sound directions live, from a recorder program or raw PCM on stdin')
    .description(
      'Capture audio live through a recorder program (sox, rec or arecord), or read raw interleaved s16le ' +
        'PCM from stdin, find directions as scan does, and write records as they happen: event records ' +
        '(JSON Lines) to stdout, frame records too with --frames, and a gap record ' +
        '{"gap": why, "start_s", "end_s", "utc"} where capture lost audio (a recorder that stops is ' +
        'restarted with back-off). Live records carry utc; time_s keeps step with the wall clock, so after ' +
        'a gap it jumps by the seconds lost.\n\n' +
        'Optionally serves a live polar view (--serve), writes rotating log files (--log-dir) and publishes ' +
        'events to an MQTT broker (--mqtt). SIGINT/SIGTERM flush and close everything and exit 0; SIGHUP ' +
        'starts new log files.',
    );
  addOptions(cmd, listenOptionSpecs);
  addOptions(cmd, RECORDER_OPTION_SPECS);
  addAnalysisOptions(cmd);
  addFeedOptions(cmd);
  addOptions(cmd, stationOptionSpecs);
  addOptions(cmd, recordLogOptionSpecs);
  addOptions(cmd, mqttOptionSpecs);
  cmd.addHelpText(
    'after',
    '\nWith a recorder, --rate defaults to 48000 and --channels to the number of mics; with --stdin give both.\n' +
      'A profile (--profile) may hold "station", "log" and "mqtt" sections besides "analysis" and "tracker";\n' +
      'flags win over the profile.\n' +
      '\nExamples:\n' +
      '  bearline listen --spacing 0.2 --recorder arecord --device hw:1,0\n' +
      '  bearline listen --array square-10cm --serve            (then open the printed URL)\n' +
      '  arecord -f S16_LE -r 48000 -c 2 -t raw | bearline listen --stdin --rate 48000 --channels 2 --spacing 0.2\n' +
      '  bearline listen --array square-10cm --profile station-low-cpu --station marsh-east --quiet \\\n' +
      '      --log-dir /var/lib/bearline/logs --mqtt mqtt://192.168.1.10:1883 --health 8418\n' +
      '\nField stations: weatherproofing and the electrical safety of mains-powered stations are your\n' +
      'responsibility under your local codes. --feed-host and --health-host other than 127.0.0.1 let other\n' +
      'machines connect: set --feed-token, and expose --health only on a trusted network.\n',
  );
  cmd.action(action(async () => listen(cmd)));
}

interface InputPlan {
  kind: 'stdin' | 'recorder';
  sampleRate: number;
  channels: number;
  recorder: RecorderOptions | null;
}

function planInput(cmd: Command, stdin: boolean, mics: number): InputPlan {
  const rec = givenOptions<RecorderOptions>(cmd, RECORDER_OPTION_SPECS);
  if (stdin) {
    refuseStray(givenFlags(cmd, RECORDER_OPTION_SPECS.filter((s) => RECORDER_ONLY_KEYS.includes(s.key))), 'for live capture through a recorder, not for --stdin; drop the option');
    if (rec.sampleRate === undefined || rec.channels === undefined) {
      throw new UsageError('--stdin needs --rate R and --channels N (the raw stream carries no header)');
    }
    return { kind: 'stdin', sampleRate: rec.sampleRate, channels: rec.channels, recorder: null };
  }
  const recorder = resolveRecorderOptions({ ...rec, channels: rec.channels ?? mics });
  return { kind: 'recorder', sampleRate: recorder.sampleRate, channels: recorder.channels, recorder };
}

async function listen(cmd: Command): Promise<void> {
  // Everything the user gave is checked before anything starts.
  const flags = readOptions<ListenValues>(cmd, listenOptionSpecs);
  const stages = resolveStageSettings(cmd);
  const geometry = resolveArray(stages.array);
  const c = resolveSpeed(stages.array);
  const station = resolveStationOptions(sectionSettings<StationOptions>(cmd, stationOptionSpecs, stages.profile, 'station'));
  const logOptions = resolveRecordLogOptions(sectionSettings<RecordLogOptions>(cmd, recordLogOptionSpecs, stages.profile, 'log'));
  const mqttOptions = resolveMqttOptions(sectionSettings<MqttOptions>(cmd, mqttOptionSpecs, stages.profile, 'mqtt'));
  const feedOptions = resolveServe(cmd, flags.serve, feedOptionSpecs);
  if (logOptions.logDir !== null) checkFolderOption('--log-dir', logOptions.logDir);
  if (mqttOptions.mqtt !== null) checkFolderOption('--mqtt-queue-dir', mqttOptions.mqttQueueDir ?? DEFAULT_MQTT_QUEUE_DIR);
  if (flags.quiet && flags.out !== null) throw new UsageError('--quiet and --out both say where records go; give one of them');
  const out = flags.out === null || flags.out === '-' ? null : planOutput('--out', flags.out);
  if (flags.quiet && flags.frames) throw new UsageError('--frames writes frame records to stdout, which --quiet turns off; use --log-frames to log them');
  const input = planInput(cmd, flags.stdin, geometry.mics.length);
  const where = input.kind === 'stdin' ? 'the stdin stream' : `the ${input.recorder!.recorder} capture`;
  if (input.channels < 2) throw new UsageError(`${where} has one channel: direction finding needs at least two (one per mic)`);
  checkGeometryForStream(geometry, input.channels, input.sampleRate, c, where);
  const setup = createAnalysis(geometry, input.sampleRate, c, stages.analysis);
  warmUp(setup, input.sampleRate);

  const opened: StationSink[] = [];
  try {
    await runLive(flags, { setup, input, out, station, logOptions, mqttOptions, feedOptions, tracker: stages.tracker }, opened);
  } catch (err) {
    // A failure while starting: close what was opened (in reverse; --out is abandoned, so the
    // file there keeps its old contents), then report.
    for (const sink of opened.reverse()) await Promise.resolve(sink.close()).catch(() => undefined);
    throw err;
  }
}

interface LivePlan {
  setup: AnalysisSetup;
  input: InputPlan;
  /** --out (null: stdout, or none with --quiet). */
  out: OutputTarget | null;
  station: StationOptions;
  logOptions: RecordLogOptions;
  mqttOptions: MqttOptions;
  feedOptions: FeedOptions | null;
  tracker: ConstructorParameters<typeof TrackingSession>[1];
}

async function runLive(flags: ListenValues, plan: LivePlan, opened: StationSink[]): Promise<void> {
  const { setup, input, station } = plan;
  const rate = input.sampleRate;
  const geometry = setup.geometry;
  const withBearing = geometry.headingDeg !== null;

  const writer = flags.quiet ? null : RecordWriter.open<LiveRecord>(plan.out, 'jsonl', []);
  if (writer) opened.push({ name: writer.name, close: () => writer.abandon() });
  const log = plan.logOptions.logDir === null ? null : new RecordLog(station.station, plan.logOptions, { frameColumns: frameColumns(setup.model.pairs, withBearing) });
  if (log) opened.push(log);
  const mqtt = plan.mqttOptions.mqtt === null ? null : new MqttSink(station.station, plan.mqttOptions);
  if (mqtt) opened.push(mqtt);
  const settings: FeedSettings = {
    station: station.station,
    source: input.kind === 'stdin' ? 'stdin' : input.recorder!.recorder,
    sample_rate_hz: rate,
    channels: input.channels,
    frame: setup.options.frame,
    hop_s: setup.options.hop / rate,
    speed_of_sound_m_s: setup.speedOfSound,
  };
  const feed = plan.feedOptions ? await startFeedServer({ ...plan.feedOptions, geometry, settings }) : null;
  if (feed) {
    opened.push({ name: 'the live feed', close: () => feed.close() });
    process.stderr.write(`bearline: live view at ${feed.url} (feed ${feed.feedUrl})\n`);
  }

  const clock = new StreamClock(rate);
  let session: TrackingSession | null = null;
  const monitor = new StatusMonitor({
    station: station.station,
    counters: () => ({ hops: session?.hops ?? 0, droppedAudioS: Math.round(clock.lostS * 100) / 100, events: session?.events ?? 0 }),
    disk: () => {
      const s = log?.stats();
      return { usedBytes: s ? s.diskUsed : null, freeBytes: s ? s.diskFree : null };
    },
    mqtt: mqtt ? () => mqtt.stats() : undefined,
  });
  opened.unshift(monitor);
  const health = station.health === null ? null : await startHealthServer(station.health, station.healthHost, () => monitor.snapshot());
  if (health) {
    opened.unshift(health);
    process.stderr.write(`bearline: status as JSON at http://${station.healthHost}:${health.port}/health\n`);
  }
  monitor.startLines(station.statusEvery, (line) => {
    process.stderr.write(`bearline: ${line}\n`);
    mqtt?.publishStatus({ ...monitor.snapshot() });
  });

  const wantFrames = flags.frames || plan.logOptions.logFrames || plan.mqttOptions.mqttFrames || feed !== null;
  const writeFrames = flags.frames && writer !== null;
  session = new TrackingSession(
    { headingDeg: geometry.headingDeg, mirror: setup.model.mirror, pairs: setup.model.pairs, maxSources: setup.options.maxSources, diagnostics: false, viewerFields: feed !== null },
    plan.tracker,
    {
      onFrame: wantFrames
        ? (rec) => {
            log?.writeFrame(rec);
            mqtt?.publishFrame(rec);
            feed?.sendFrame(rec);
            return writeFrames ? writer!.write(rec) : undefined;
          }
        : undefined,
      onEvent: (rec) => {
        log?.writeEvent(rec);
        mqtt?.publishEvent(rec);
        feed?.sendEvent(rec);
        return writer?.write(rec);
      },
      utcAt: (t) => clock.utcAt(t),
      onWarning: stderrWarning,
    },
    setup.checks,
  );

  const emitGap = (rec: GapRecord): void => {
    void writer?.write(rec);
    log?.writeGap(rec);
    feed?.sendGap(captureGapOf(rec));
  };
  // A recorder restart: the gap is written when audio comes back (then its length is known).
  const held: { gap: { startS: number; reason: string } | null } = { gap: null };
  const onGap = (g: RecorderGap): void => {
    const startS = clock.streamTime(g.atFrame / rate);
    if (g.retryInS > 0) held.gap = { startS, reason: g.reason };
    else emitGap(gapRecord(startS, 0, g.reason, clock.utcAt(startS)));
  };

  let source: AudioSource;
  let recorder: RecorderSource | null = null;
  if (input.kind === 'stdin') {
    source = openPcmStreamSource(process.stdin, { sampleRate: rate, channels: input.channels, blockFrames: setup.options.hop, onWarning: stderrWarning });
  } else {
    recorder = await openRecorderSource(input.recorder!, { blockFrames: setup.options.hop, onGap, onWarning: stderrWarning });
    source = recorder;
  }
  opened.length = 0; // from here on the shutdown sequence closes them

  let lastSegment: RecorderSource['segment'] = null;
  const halfFrameS = setup.options.frame / 2 / rate;
  const onHop = (r: HopResult): Promise<void> | undefined => {
    if (recorder) {
      const seg = recorder.segment;
      if (seg !== null && seg !== lastSegment) {
        lastSegment = seg;
        const lost = clock.beginRun(seg.frame, seg.at.getTime());
        if (held.gap) emitGap(gapRecord(held.gap.startS, lost, held.gap.reason, clock.utcAt(held.gap.startS)));
        held.gap = null;
      }
    } else if (!clock.started) {
      // stdin: the stream is taken to run in real time from the audio that has arrived by now.
      clock.beginRun(0, Date.now() - (r.timeS + halfFrameS) * 1000);
    }
    // Live stream time keeps step with the wall clock (stream-clock.ts). The analyzer sets
    // timeS afresh for every hop, so shifting it here touches nothing else.
    r.timeS = clock.streamTime(r.timeS);
    return session!.hop(r);
  };

  let stopping = false;
  const loopDone = (async () => {
    await runAnalysis(source, setup.analyzer, onHop);
    await session!.finish();
  })().then(
    () => null,
    (err: unknown) => err,
  );
  let failure: unknown = null;
  const sinks: StationSink[] = [monitor];
  if (health) sinks.push(health);
  if (feed) sinks.push({ name: 'the live feed', close: () => feed.close() });
  if (mqtt) sinks.push(mqtt);
  if (log) sinks.push(log);
  if (writer) sinks.push({ name: writer.name, close: () => closeLiveWriter(writer, failure !== null) });
  const handle = installShutdown(sinks, {
    stopInput: async () => {
      stopping = true;
      await source.close();
      await loopDone;
    },
    closeTimeout: station.closeTimeout,
    exit: (code) => (failure ? failAndExit(failure) : process.exit(code)),
  });
  const err = await loopDone;
  if (stopping) return; // a signal's stop sequence is running and will exit
  if (err) {
    failure = err;
    if (held.gap) emitGap(gapRecord(held.gap.startS, 0, held.gap.reason, clock.utcAt(held.gap.startS)));
  }
  await handle.stop(err ? 'stopping on an error' : input.kind === 'stdin' ? 'stdin ended' : 'the recorder stopped');
}

/**
 * The end of a live run's --out: renamed into place after a clean stop. After a failure the
 * file at --out is not replaced, and the records of this run (captured once, never again) stay
 * in the partial file beside it, which stderr names.
 */
async function closeLiveWriter(writer: RecordWriter<LiveRecord>, failed: boolean): Promise<void> {
  if (!failed) {
    try {
      await writer.close();
      return;
    } catch (err) {
      const kept = await writer.keepAside();
      throw new RuntimeFailure(`${(err as Error).message}${kept ? `; the records written before it are in ${kept}` : ''}`);
    }
  }
  const kept = await writer.keepAside();
  if (kept) process.stderr.write(`bearline: the run failed, so ${writer.name} was not replaced; this run's records are in ${kept}\n`);
}

/**
 * The live run behind `bearline listen`: a live source (a recorder program, or raw PCM on
 * stdin) -> the analysis -> the tracking session -> the sinks (stdout or --out, the rotating
 * log, MQTT, the live feed), with the station's status line, health endpoint and orderly stop.
 * Stream time and the holes in it come with the source's blocks (sources/stream-clock.ts).
 */
import { runAnalysis, warmUp, type AnalysisSetup } from '../analysis/analysis.js';
import type { FeedOptions } from '../feed/feed-options.js';
import type { FeedSettings } from '../feed/feed-protocol.js';
import { evidenceTap } from '../feed/evidence-tap.js';
import { startFeedServer } from '../feed/feed-server.js';
import { frameColumns } from '../records/frame-columns.js';
import { gapRecord } from '../records/gap-record.js';
import type { MqttOptions } from '../sinks/mqtt-options.js';
import { MqttSink } from '../sinks/mqtt-sink.js';
import type { OutputTarget } from '../sinks/output-target.js';
import type { RecordLogOptions } from '../sinks/record-log-options.js';
import { RecordLog } from '../sinks/record-log.js';
import { countingSink, describeCounts, fanOut, type RecordSink } from '../sinks/record-sink.js';
import { RecordWriter } from '../sinks/record-writer.js';
import type { AudioSource, StreamGap } from '../sources/audio-source.js';
import { openPcmStreamSource } from '../sources/pcm-stream-source.js';
import type { RecorderOptions } from '../sources/recorder-options.js';
import { openRecorderSource } from '../sources/recorder-source.js';
import { startHealthServer } from '../station/health-server.js';
import type { StationOptions } from '../station/runtime-options.js';
import { polledStdin } from '../sources/polled-reader.js';
import { installShutdown, type StationSink } from '../station/shutdown.js';
import { StatusMonitor } from '../station/status.js';
import { AnalysisMeter } from '../analysis/analysis-meter.js';
import type { TrackerOptions } from '../track/options.js';
import { TrackingSession } from '../track/tracking-session.js';
import { RuntimeFailure } from '../util/errors.js';
import { stderrWarning } from '../util/stderr-warning.js';
import { maskToken } from '../util/mask-token.js';

/** Where the live audio comes from. */
export type LiveInput = { readonly kind: 'stdin'; readonly sampleRate: number; readonly channels: number } | { readonly kind: 'recorder'; readonly recorder: RecorderOptions };

/** Everything the run needs, checked before anything starts (cli/listen.ts). */
export interface LivePlan {
  readonly setup: AnalysisSetup;
  readonly input: LiveInput;
  /** Records on stdout or --out: where (null target = stdout) and whether frames too; null with --quiet. */
  readonly out: { readonly target: OutputTarget | null; readonly frames: boolean } | null;
  readonly station: StationOptions;
  readonly log: RecordLogOptions;
  readonly mqtt: MqttOptions;
  readonly feed: FeedOptions | null;
  readonly tracker: Partial<TrackerOptions>;
  /** Called with the exit code when the run stops (default: process.exit); a failure is reported before. */
  readonly exit?: (code: number, failure: unknown) => void;
}

/** The sinks of a live run, opened in order. */
interface LiveSinks {
  readonly writer: RecordWriter | null;
  readonly log: RecordLog | null;
  readonly mqtt: MqttSink | null;
  readonly feed: Awaited<ReturnType<typeof startFeedServer>> | null;
  /** All of them, in the order records go to them. */
  readonly all: RecordSink[];
}

/**
 * Open the sinks. If one fails to open, those opened before it are closed (--out is
 * abandoned, so the file there keeps its old contents) and the failure is thrown.
 */
async function openSinks(plan: LivePlan, sampleRate: number, channels: number): Promise<LiveSinks> {
  const { setup, station } = plan;
  const opened: StationSink[] = [];
  try {
    const writer = plan.out ? RecordWriter.jsonLines(plan.out.target, { frames: plan.out.frames, events: true, gaps: true }) : null;
    if (writer) opened.push({ name: writer.name, close: () => writer.abandon() });
    const log = plan.log.logDir === null ? null : new RecordLog(station.station, plan.log, { frameColumns: frameColumns(setup.model.pairs, setup.geometry.headingDeg !== null) });
    if (log) opened.push(log);
    const mqtt = plan.mqtt.mqtt === null ? null : new MqttSink(station.station, plan.mqtt);
    if (mqtt) opened.push(mqtt);
    const settings: FeedSettings = {
      station: station.station,
      source: plan.input.kind === 'stdin' ? 'stdin' : plan.input.recorder.recorder,
      sample_rate_hz: sampleRate,
      channels,
      frame: setup.options.frame,
      hop_s: setup.options.hop / sampleRate,
      speed_of_sound_m_s: setup.speedOfSound,
    };
    const feed = plan.feed ? await startFeedServer({ ...plan.feed, geometry: setup.geometry, settings }) : null;
    if (feed) process.stderr.write(`bearline: live view at ${maskToken(feed.url)} (feed ${maskToken(feed.feedUrl)})${plan.feed?.token ? ' (the token is masked: put in the one you gave)' : ''}\n`);
    const all = [writer, log, mqtt, feed].filter((s): s is NonNullable<typeof s> => s !== null);
    return { writer, log, mqtt, feed, all };
  } catch (err) {
    for (const sink of opened.reverse()) await Promise.resolve(sink.close()).catch(() => undefined);
    throw err;
  }
}

async function openSource(plan: LivePlan): Promise<AudioSource> {
  const blockFrames = plan.setup.options.hop;
  if (plan.input.kind === 'stdin') {
    const { sampleRate, channels } = plan.input;
    const everyMs = plan.station.readEvery * 1000;
    return openPcmStreamSource(everyMs > 0 ? polledStdin(everyMs) : process.stdin, { sampleRate, channels, blockFrames, onWarning: stderrWarning, live: {} });
  }
  return openRecorderSource(plan.input.recorder, { blockFrames, onWarning: stderrWarning });
}

/**
 * The end of a live run's --out: renamed into place after a clean stop. After a failure the
 * file at --out is not replaced, and the records of this run (captured once, never again) stay
 * in the partial file beside it, which stderr names.
 */
async function closeLiveWriter(writer: RecordWriter, failed: boolean): Promise<void> {
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

/** The last line's account: the records and where they went, with what MQTT still holds for the broker. */
function writtenLine(counts: string, sinks: LiveSinks): string {
  const where = sinks.all.map((s) => s.name).join(', ') || 'no sink';
  const mq = sinks.mqtt?.stats();
  const left = mq ? `; MQTT: ${mq.delivered} acknowledged by the broker in this run, ${mq.queued} left in the queue ${sinks.mqtt!.queueDir} for the next start` : '';
  return `${counts} to ${where}${left}`;
}

/** Run until the input ends, fails or a stop signal arrives; exits through plan.exit with the stop sequence's code. */
export async function runLive(plan: LivePlan): Promise<void> {
  const { setup, station } = plan;
  const sampleRate = plan.input.kind === 'stdin' ? plan.input.sampleRate : plan.input.recorder.sampleRate;
  const channels = plan.input.kind === 'stdin' ? plan.input.channels : plan.input.recorder.channels;
  warmUp(setup, sampleRate);
  const sinks = await openSinks(plan, sampleRate, channels);
  const { sink: records, counts } = countingSink(fanOut(sinks.all));
  let session: TrackingSession | null = null;
  let lostS = 0;
  const meter = new AnalysisMeter(setup.options.hop / sampleRate);
  const monitor = new StatusMonitor({
    station: station.station,
    counters: () => ({ hops: session?.hops ?? 0, droppedAudioS: Math.round(lostS * 100) / 100, events: session?.events ?? 0, analysisRealTime: meter.realTimeFactor() }),
    disk: () => {
      const s = sinks.log?.stats();
      return { usedBytes: s ? s.diskUsed : null, freeBytes: s ? s.diskFree : null };
    },
    mqtt: sinks.mqtt ? () => sinks.mqtt!.stats() : undefined,
  });
  let health: Awaited<ReturnType<typeof startHealthServer>> | null = null;
  let source: AudioSource;
  try {
    health = station.health === null ? null : await startHealthServer({ port: station.health, host: station.healthHost, allowHosts: station.healthAllowHosts }, () => monitor.snapshot());
    if (health) process.stderr.write(`bearline: status as JSON at http://${station.healthHost}:${health.port}/health\n`);
    source = await openSource(plan);
  } catch (err) {
    // A failure while starting: close what was opened (--out is abandoned), then report.
    for (const closer of [health, monitor]) await Promise.resolve(closer?.close()).catch(() => undefined);
    await sinks.writer?.abandon();
    for (const sink of [sinks.feed, sinks.mqtt, sinks.log]) await Promise.resolve(sink?.close()).catch(() => undefined);
    throw err;
  }
  monitor.startLines(station.statusEvery, (line) => {
    process.stderr.write(`bearline: ${line}\n`);
    sinks.mqtt?.publishStatus({ ...monitor.snapshot() });
  });

  session = TrackingSession.of(setup, plan.tracker, records, { viewerFields: sinks.feed !== null, onWarning: stderrWarning });
  const onGap = (g: StreamGap, epochMs: number): ReturnType<RecordSink['gap']> => {
    lostS += g.lostS;
    return records.gap(gapRecord(g.fromS, g.lostS, g.reason, new Date(epochMs + g.fromS * 1000).toISOString()));
  };
  const running = session;
  let stopping = false;
  const tap = sinks.feed ? evidenceTap(sinks.feed, setup) : null;
  const loopDone = (async () => {
    await runAnalysis(source, setup.analyzer, {
      onHop: (r, time) => {
        const out = running.hop(r, time);
        tap?.(time.timeS);
        return out;
      },
      onGap,
      meter,
    });
    await running.finish();
  })().then(
    () => null,
    (err: unknown) => err,
  );

  let failure: unknown = null;
  const closers: StationSink[] = [monitor];
  if (health) closers.push(health);
  for (const sink of [sinks.feed, sinks.mqtt, sinks.log]) if (sink) closers.push(sink);
  const writer = sinks.writer;
  if (writer) closers.push({ name: writer.name, close: () => closeLiveWriter(writer, failure !== null) });
  const exit = plan.exit ?? ((code: number) => process.exit(code));
  const handle = installShutdown(closers, {
    stopInput: async () => {
      stopping = true;
      await source.close();
      await loopDone;
    },
    closeTimeout: station.closeTimeout,
    written: () => writtenLine(describeCounts(counts), sinks),
    exit: (code) => exit(failure ? 1 : code, failure),
  });
  const err = await loopDone;
  if (stopping) return; // a signal's stop sequence is running and will exit
  failure = err;
  await handle.stop(err ? 'stopping on an error' : plan.input.kind === 'stdin' ? 'stdin ended' : 'the recorder stopped');
}

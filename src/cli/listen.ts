import type { Command } from 'commander';
import { createAnalysis } from '../analysis/analysis.js';
import { feedOptionSpecs } from '../feed/feed-options.js';
import { checkGeometryForStream } from '../geometry/geometry-file.js';
import { runLive, type LiveInput } from '../live/live-run.js';
import { flagOption, textOption, type OptionSpec } from '../options/option-spec.js';
import { mqttOptionSpecs, mqttQueueRoot, resolveMqttOptions, type MqttOptions } from '../sinks/mqtt-options.js';
import { checkFolderOption, planOutput } from '../sinks/output-target.js';
import { recordLogOptionSpecs, resolveRecordLogOptions, type RecordLogOptions } from '../sinks/record-log-options.js';
import { RECORDER_OPTION_SPECS, resolveRecorderOptions, type RecorderOptions } from '../sources/recorder-options.js';
import { resolveStationOptions, stationOptionSpecs, type StationOptions } from '../station/runtime-options.js';
import { UsageError } from '../util/errors.js';
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

function planInput(cmd: Command, stdin: boolean, mics: number): LiveInput {
  const rec = givenOptions<RecorderOptions>(cmd, RECORDER_OPTION_SPECS);
  if (stdin) {
    refuseStray(givenFlags(cmd, RECORDER_OPTION_SPECS.filter((s) => RECORDER_ONLY_KEYS.includes(s.key))), 'for live capture through a recorder, not for --stdin; drop the option');
    if (rec.sampleRate === undefined || rec.channels === undefined) {
      throw new UsageError('--stdin needs --rate R and --channels N (the raw stream carries no header)');
    }
    return { kind: 'stdin', sampleRate: rec.sampleRate, channels: rec.channels };
  }
  return { kind: 'recorder', recorder: resolveRecorderOptions({ ...rec, channels: rec.channels ?? mics }) };
}

/** Every option checked, every output planned, the analysis built: then the live run (live/live-run.ts). */
async function listen(cmd: Command): Promise<void> {
  const flags = readOptions<ListenValues>(cmd, listenOptionSpecs);
  const stages = resolveStageSettings(cmd);
  const geometry = resolveArray(stages.array);
  const c = resolveSpeed(stages.array);
  const station = resolveStationOptions(sectionSettings<StationOptions>(cmd, stationOptionSpecs, stages.profile, 'station'));
  const log = resolveRecordLogOptions(sectionSettings<RecordLogOptions>(cmd, recordLogOptionSpecs, stages.profile, 'log'));
  const mqtt = resolveMqttOptions(sectionSettings<MqttOptions>(cmd, mqttOptionSpecs, stages.profile, 'mqtt'));
  const feed = resolveServe(cmd, flags.serve, feedOptionSpecs);
  if (log.logDir !== null) checkFolderOption('--log-dir', log.logDir);
  if (mqtt.mqtt !== null) {
    const given = mqtt.mqttQueueDir !== null;
    checkFolderOption(given ? '--mqtt-queue-dir' : 'the MQTT queue folder (the default; give --mqtt-queue-dir to move it)', mqttQueueRoot(mqtt));
  }
  if (flags.quiet && flags.out !== null) throw new UsageError('--quiet and --out both say where records go; give one of them');
  if (flags.quiet && flags.frames) throw new UsageError('--frames writes frame records to stdout, which --quiet turns off; use --log-frames to log them');
  const target = flags.out === null || flags.out === '-' ? null : planOutput('--out', flags.out);
  const input = planInput(cmd, flags.stdin, geometry.mics.length);
  const sampleRate = input.kind === 'stdin' ? input.sampleRate : input.recorder.sampleRate;
  const channels = input.kind === 'stdin' ? input.channels : input.recorder.channels;
  const where = input.kind === 'stdin' ? 'the stdin stream' : `the ${input.recorder.recorder} capture`;
  if (channels < 2) throw new UsageError(`${where} has one channel: direction finding needs at least two (one per mic)`);
  checkGeometryForStream(geometry, channels, sampleRate, c, where);
  const setup = createAnalysis(geometry, sampleRate, c, stages.analysis);
  await runLive({
    setup,
    input,
    out: flags.quiet ? null : { target, frames: flags.frames },
    station,
    log,
    mqtt,
    feed,
    tracker: stages.tracker,
    exit: (code, failure) => (failure ? failAndExit(failure) : process.exit(code)),
  });
}

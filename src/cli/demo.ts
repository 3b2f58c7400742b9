import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import { homedir, tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Command } from 'commander';
import { compareTracks, type TrackComparison } from '../accuracy/track-match.js';
import { indexTruth, parseTruth, TRUTH_STEP_S } from '../accuracy/truth.js';
import { UsageError } from '../util/errors.js';
import { startFeedServer, type FeedServer } from '../feed/feed-server.js';
import { loadGeometryFile } from '../geometry/geometry-file.js';
import { resolveAnalysisOptions } from '../analysis/analysis-options.js';
import { bearingOf } from '../records/frame-record.js';
import type { EventRecord } from '../records/record-types.js';
import { callbackSink, fanOut } from '../sinks/record-sink.js';
import { demoScenePath, loadSceneFile } from '../sim/scene.js';
import { addAnalysisOptions, resolveStageSettings } from './analysis-flags.js';
import { flagOption, textOption, type OptionSpec } from '../options/option-spec.js';
import { resolveSpeed } from './geometry-option.js';
import { addOptions, readOptions } from './options.js';
import { addFeedOptions, feedOptionsOf } from './serve-flags.js';
import { analyseRecording } from './recording-analysis.js';
import { action } from './run-command.js';
import { runSimulate } from './simulate.js';
import { maskToken } from '../util/mask-token.js';

interface DemoValues {
  fast: boolean;
  scene: string | null;
}

const demoOptionSpecs: readonly OptionSpec<keyof DemoValues>[] = [
  flagOption('fast', 'fast', false, 'analyse as fast as possible, without the viewer'),
  textOption('scene', 'scene', 'file.json', null, 'another scene file instead of the built-in one (format: bearline simulate --help)', { defaultText: 'configs/scenes/wetland-dusk.json' }),
];

/** Bumped when the simulator's output for the same scene file changes (old cache entries are then ignored). */
const RENDER_VERSION = 'sim-1';

/** The cache folder: $XDG_CACHE_HOME/bearline, else ~/.cache/bearline. */
export function cacheDir(env: NodeJS.ProcessEnv = process.env): string {
  const base = env.XDG_CACHE_HOME && env.XDG_CACHE_HOME.startsWith('/') ? env.XDG_CACHE_HOME : join(homedir(), '.cache');
  return join(base, 'bearline');
}

/** Cache file stem of a scene: its content hash. */
export function sceneKey(sceneText: string): string {
  return createHash('sha256').update(RENDER_VERSION).update('\0').update(sceneText).digest('hex').slice(0, 16);
}

/** Render the scene once; later runs reuse the files in the cache. */
function renderedScene(scenePath: string): { wav: string; truth: string; array: string; fresh: boolean } {
  let text: string;
  try {
    text = readFileSync(scenePath, 'utf8');
  } catch {
    throw new UsageError(`cannot read scene file ${scenePath}: check the path given to --scene`);
  }
  let dir = cacheDir();
  try {
    mkdirSync(dir, { recursive: true });
  } catch {
    dir = join(tmpdir(), 'bearline-cache');
    mkdirSync(dir, { recursive: true });
    process.stderr.write(`bearline: warning: cannot create the cache folder ${cacheDir()}; using ${dir}\n`);
  }
  const stem = join(dir, `scene-${sceneKey(text)}`);
  const files = { wav: `${stem}.wav`, truth: `${stem}.truth.jsonl`, array: `${stem}.array.json` };
  const fresh = !(existsSync(files.wav) && existsSync(files.truth) && existsSync(files.array));
  if (fresh) {
    process.stderr.write(`rendering ${scenePath} once (cached in ${dir}) ...\n`);
    runSimulate({ scene: scenePath, out: files.wav, float: false });
  }
  return { ...files, fresh };
}

function clock(s: number): string {
  const m = Math.floor(s / 60);
  return `${m}:${(s - 60 * m).toFixed(1).padStart(4, '0')}`;
}

function direction(az: number, heading: number | null): string {
  return heading === null ? `azimuth ${az.toFixed(1).padStart(6)} deg` : `bearing ${bearingOf(az, heading).toFixed(1).padStart(5)} deg`;
}

/** One live line per event: time, bearing (or azimuth), track, band. */
export function eventLine(e: EventRecord, heading: number | null): string {
  const band = e.band_hz ? `${e.band_hz[0]}-${e.band_hz[1]} Hz` : '-';
  return `${clock(e.start_s).padStart(7)}  ${direction(e.azimuth_deg, heading)}  track ${String(e.track).padStart(2)}  band ${band.padEnd(13)}  ${(e.end_s - e.start_s).toFixed(2)} s  spread ${e.spread_deg.toFixed(1)} deg`;
}

function table(rows: string[][]): string[] {
  const widths = rows[0]!.map((_, c) => Math.max(...rows.map((r) => r[c]!.length)));
  return rows.map((r) => r.map((cell, c) => (c === r.length - 1 ? cell : cell.padStart(widths[c]!))).join('  ').trimEnd());
}

/** The closing table: per track against the scene's sources, then per source. */
export function formatDemoSummary(cmp: TrackComparison, heading: number | null): string {
  const name = heading === null ? 'azimuth' : 'bearing';
  const show = (az: number | null): string => (az === null ? '-' : `${(heading === null ? az : bearingOf(az, heading)).toFixed(1)} deg`);
  const lines = table([
    ['track', 'events', `mean ${name}`, 'spread', 'source (truth)', `true ${name}`, 'off by', 'events of it'],
    ...cmp.tracks.map((t) => [
      String(t.track),
      String(t.events),
      show(t.azimuthDeg),
      `${t.spreadDeg.toFixed(1)} deg`,
      t.events === 0 ? '(no events)' : (t.source ?? '(none active)'),
      show(t.truthAzimuthDeg),
      t.errorDeg === null ? '-' : `${t.errorDeg >= 0 ? '+' : ''}${t.errorDeg.toFixed(1)} deg`,
      String(t.matchedEvents),
    ]),
  ]);
  lines.push(`off by = the track's mean minus its source's true ${name} averaged over the times of the same events; a track with no events shows the mean of its hops`);
  lines.push('');
  lines.push(
    ...table([
      ['source', 'kind', 'calls (truth)', 'events', 'tracks'],
      ...cmp.sources.map((s) => [s.source, s.fixed ? 'fixed' : 'moving', String(s.calls), String(s.events), s.tracks.length ? s.tracks.join(', ') : '-']),
    ]),
  );
  const totalEvents = cmp.tracks.reduce((n, t) => n + t.events, 0);
  const totalCalls = cmp.sources.reduce((n, s) => n + s.calls, 0);
  lines.push(`${cmp.tracks.length} tracks, ${totalEvents} events (${cmp.unmatchedEvents} while no source was calling); the scene has ${cmp.sources.length} sources and ${totalCalls} calls`);
  return lines.join('\n') + '\n';
}

async function runDemo(cmd: Command): Promise<void> {
  const flags = readOptions<DemoValues>(cmd, demoOptionSpecs);
  const stages = resolveStageSettings(cmd);
  if (stages.array.array !== undefined || stages.array.spacing !== undefined) throw new UsageError('the demo takes its array from the scene: leave out --array and --spacing (use --scene for another scene)');
  const scenePath = flags.scene ?? demoScenePath();
  const feedOptions = flags.fast ? null : feedOptionsOf(cmd);
  const { scene } = loadSceneFile(scenePath);
  // Every setting is checked before the scene is rendered or the feed opened.
  resolveAnalysisOptions(stages.analysis, scene.sampleRate);
  const files = renderedScene(scenePath);
  const geometry = loadGeometryFile(files.array);
  const c = stages.array.temperature !== undefined || stages.array.speedOfSound !== undefined ? resolveSpeed(stages.array) : scene.speedOfSound;
  const truthRecords = parseTruth(readFileSync(files.truth, 'utf8'), files.truth);
  const heading = geometry.headingDeg;

  let feed: FeedServer | null = null;
  let stopped = false;
  const onSigint = (): void => {
    stopped = true;
  };
  process.on('SIGINT', onSigint);
  const events: EventRecord[] = [];
  try {
    if (feedOptions) {
      feed = await startFeedServer({
        ...feedOptions,
        geometry,
        settings: { sample_rate_hz: scene.sampleRate, source: 'demo', scene: scenePath },
      });
    }
    const pace = flags.fast ? 'as fast as it goes' : 'at real-time pace';
    process.stdout.write(`bearline demo: ${scene.durationS} s of ${scenePath}, ${geometry.mics.length} mics, analysed ${pace}\n`);
    if (feed) process.stdout.write(`viewer: ${maskToken(feed.url)}   (Ctrl-C to stop)\n`);
    process.stdout.write('   time  direction            track    band                 length  spread\n');
    const result = await analyseRecording({
      wav: files.wav,
      geometry,
      speedOfSound: c,
      stages,
      viewerFields: feed !== null,
      sink: fanOut([
        callbackSink('the terminal', {
          event: (rec) => {
            events.push(rec);
            process.stdout.write(eventLine(rec, heading) + '\n');
          },
        }),
        ...(feed ? [feed] : []),
      ]),
      onSetup: () => ({ realTime: !flags.fast, stopped: () => stopped }),
      evidenceTo: feed,
    });
    const doneS = (result.hops * result.setup.options.hop) / result.sampleRate;
    if (stopped) process.stdout.write(`stopped at ${clock(doneS)} of ${clock(scene.durationS)}\n`);
    // Against the truth of the stretch analysed (all of it unless stopped early).
    const truth = indexTruth(truthRecords.filter((r) => r.time_s < doneS));
    process.stdout.write('\n' + formatDemoSummary(compareTracks(events, truth, TRUTH_STEP_S, result.session.summary()), heading));
  } finally {
    process.off('SIGINT', onSigint);
    await feed?.close();
  }
}

export function registerDemo(program: Command): void {
  const cmd = program
    .command('demo')
    .summary('the built-in demo: a simulated wetland station at dusk, analysed live with the browser viewer')
    .description(
      'Render the built-in demo scene (configs/scenes/wetland-dusk.json: two frog choruses and a passing bird ' +
        'around a four-mic array, light wind) and analyse it as bearline scan would, at real-time pace: one line ' +
        'per call as it ends, frames and events to the browser viewer, whose URL is printed. --fast runs as fast ' +
        'as possible without the viewer. Both end with a table of the tracks against the scene\'s true sources. ' +
        'The rendering is cached after the first run in $XDG_CACHE_HOME/bearline (else ~/.cache/bearline), one ' +
        'file set per scene content; delete the folder to render again.',
    )
  addOptions(cmd, demoOptionSpecs);
  addAnalysisOptions(cmd);
  addFeedOptions(cmd);
  cmd.addHelpText(
    'after',
    '\nThe speed of sound is the scene\'s unless --temperature or --speed-of-sound is given; the array is the scene\'s.\n' +
      'Ctrl-C stops the demo cleanly (the table covers what was analysed).\n' +
      'Caution: if you play the rendered WAV from the cache through speakers or earphones, start at a low volume.\n' +
      '\nExamples:\n  npm start\n  bearline demo --fast\n  bearline demo --feed-port 0 --profile frog-chorus\n',
  );
  cmd.action(action(async () => runDemo(cmd)));
}

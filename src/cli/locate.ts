import { maskToken } from '../util/mask-token.js';
import { existsSync } from 'node:fs';
import type { Command } from 'commander';
import { UsageError } from '../util/errors.js';
import { planOutput, writeOutputFiles } from '../sinks/output-target.js';
import { readJsonFile, readTextFile } from '../util/read-json-file.js';
import { resolveSpeedOfSound, soundSpeedOptionSpecs, type SoundSpeedOptions } from '../geometry/sound-speed.js';
import { choiceOption, flagOption, textOption, type OptionSpec } from '../options/option-spec.js';
import type { EventRecord } from '../records/record-types.js';
import { parseEventLog } from '../locate/events.js';
import { locateEventLists } from '../locate/locate.js';
import { locateOptionSpecs, resolveLocateOptions, type LocateOptions } from '../locate/options.js';
import { type LocateFormat, LOCATE_FORMATS, toCsv, toGeoJson, toPlotScene } from '../locate/output.js';
import { parseStationFile, placeStations } from '../locate/stations.js';
import { fleetOptionSpecs, resolveFleetOptions, type FleetOptions } from '../fleet/fleet-options.js';
import { checkLiveStations, startFleetLocate } from '../fleet/fleet-locate.js';
import { liveLocateOptionSpecs, resolveLiveLocateOptions, type LiveLocateOptions } from '../locate/live-options.js';
import type { PlacedStations } from '../locate/stations.js';
import { addOptions, givenFlags, givenOptions, readOptions, refuseStray } from './options.js';
import { addFeedOptions, resolveServe } from './serve-flags.js';
import { feedOptionSpecs } from '../feed/feed-options.js';
import { action } from './run-command.js';

interface LocateValues {
  stations: string | null;
  out: string | null;
  format: LocateFormat;
}

const locateCommandSpecs: readonly OptionSpec<keyof LocateValues>[] = [
  textOption('stations', 'stations', 'file', null, 'station description file (JSON: ids, positions, headings, clocks); required', { defaultText: 'none' }),
  textOption('out', 'out', 'file', null, 'write the output to this file instead of stdout', { defaultText: 'stdout' }),
  choiceOption('format', 'format', LOCATE_FORMATS, 'geojson', 'output format'),
];

/** Split LOG arguments into (station, file): "ID=FILE" names the station; a plain FILE relies on each record's "station". */
/** --serve of locate: the live fix view, not the polar view of listen and scan. */
const SERVE_SPEC = flagOption('serve', 'serve', false, 'with --mqtt: serve the live fix view (stations, bearing rays, fixes with ellipses) and its WebSocket (see --feed-*)');

export function splitLogArgument(arg: string, knownIds: ReadonlySet<string>): { station: string | null; file: string } {
  const eq = arg.indexOf('=');
  if (eq > 0) {
    const id = arg.slice(0, eq);
    if (knownIds.has(id)) return { station: id, file: arg.slice(eq + 1) };
    if (!existsSync(arg)) {
      throw new UsageError(`'${arg}': station '${id}' is not in the station file (known: ${[...knownIds].join(', ')})`);
    }
  }
  return { station: null, file: arg };
}

export function registerLocate(program: Command): void {
  const cmd = program
    .command('locate')
    .summary('fix the positions of calls heard at several stations (GeoJSON with error ellipses)')
    .description(
      'Fix the positions of calls heard at several stations: match events across the stations\' logs, intersect their bearing lines ' +
        '(weighted least squares on the WGS 84 tangent plane, plus arrival-time differences where clocks are synchronised), ' +
        'and write GeoJSON points with error ellipses. With --mqtt, the same live from the stations on an MQTT broker.',
    )
    .argument('[logs...]', 'event logs (JSON Lines); STATION=FILE assigns a whole log to a station, a plain FILE needs "station" in each record');
  addOptions(cmd, [...locateCommandSpecs, ...soundSpeedOptionSpecs, ...locateOptionSpecs, ...fleetOptionSpecs, ...liveLocateOptionSpecs, SERVE_SPEC]);
  addFeedOptions(cmd);
  cmd
    .addHelpText(
      'after',
      `
Station file (JSON):
  {"origin": {"lat_deg": 52.37, "lon_deg": 4.89},
   "stations": [{"id": "reed-north", "lat_deg": 52.3712, "lon_deg": 4.8901, "heading_deg": 90,
                 "clock_offset_s": 0.12, "bearing_sd_deg": 4, "clock_synced": true}, ...]}
  Positions are lat_deg/lon_deg[/alt_m] (WGS 84) or east_m/north_m[/up_m] on the plane at "origin".
  Optional per station: heading_deg, clock_offset_s (station clock minus true time),
  clock_uncertainty_s, bearing_sd_deg, clock_synced, stream_start_utc, note.

Live (--mqtt): subscribes to ROOT/STATION/events and ROOT/STATION/status of every station, publishes each
fix as a GeoJSON Feature on ROOT/fixes (QoS 1) and writes it to stdout as one JSON line; a status line
goes to stderr every --status-interval s and into the retained ROOT/locate. --serve shows the fixes live.

Examples:
  bearline locate --stations marsh.json reed-north=north.jsonl dyke-east=east.jsonl > calls.geojson
  bearline locate --stations marsh.json --format csv --out calls.csv all-stations.jsonl
  bearline locate --stations marsh.json --mqtt mqtt://192.0.2.10:1883 --serve > fixes.jsonl`,
    )
    .action(
      action(async (logs: string[]) => {
        const flags = readOptions<LocateValues>(cmd, locateCommandSpecs);
        if (flags.stations === null) throw new UsageError('give the stations with --stations FILE.json (ids, positions, headings, clocks)');
        const speedOfSound = resolveSpeedOfSound(givenOptions<SoundSpeedOptions>(cmd, soundSpeedOptionSpecs));
        const options = resolveLocateOptions({ ...givenOptions<LocateOptions>(cmd, locateOptionSpecs), speedOfSound });
        const fleet = resolveFleetOptions(givenOptions<FleetOptions>(cmd, fleetOptionSpecs));
        const live = resolveLiveLocateOptions(givenOptions<LiveLocateOptions>(cmd, liveLocateOptionSpecs));
        const serve = readOptions<{ serve: boolean }>(cmd, [SERVE_SPEC]).serve;
        if (fleet.mqtt === null) {
          refuseStray(givenFlags(cmd, [...fleetOptionSpecs, ...liveLocateOptionSpecs, SERVE_SPEC, ...feedOptionSpecs]), 'only with --mqtt (live locating); add --mqtt URL or drop the option');
          if (logs.length === 0) throw new UsageError('give the event logs (STATION=FILE or FILE), or --mqtt URL to locate live from the broker');
        } else {
          if (logs.length > 0) throw new UsageError(`--mqtt locates live from the broker: drop the log files (${logs[0]}), or drop --mqtt to locate from them`);
          refuseStray(givenFlags(cmd, [locateCommandSpecs[1]!, locateCommandSpecs[2]!]), 'the live mode writes GeoJSON Features as JSON Lines to stdout and ROOT/fixes; drop the option');
        }
        const stationJson = readJsonFile(flags.stations, 'station file', '--stations');
        const placed = placeStations(parseStationFile(stationJson, flags.stations), flags.stations);
        if (fleet.mqtt !== null) {
          const feed = resolveServe(cmd, serve, feedOptionSpecs);
          process.exitCode = await runLive(placed, flags.stations, options, live, { ...fleet, mqtt: fleet.mqtt }, feed);
          return;
        }
        const ids = new Set(placed.stations.map((s) => s.id));
        const lists: Record<string, EventRecord[]> = {};
        const origins: Record<string, string[]> = {};
        const logArgs = logs.map((arg) => splitLogArgument(arg, ids));
        // Nothing the user gave may be overwritten: check --out before any work.
        const target = flags.out === null ? null : planOutput('--out', flags.out, [flags.stations, ...logArgs.map((l) => l.file)]);
        for (const { station, file } of logArgs) {
          for (const item of parseEventLog(readTextFile(file, 'event log', 'the LOG arguments'), file, station, ids)) {
            (lists[item.station] ??= []).push(item.record);
            (origins[item.station] ??= []).push(item.origin);
          }
        }
        const result = locateEventLists(placed, lists, options, origins);
        const include = options.includeUnfixed;
        const text =
          flags.format === 'csv'
            ? toCsv(result, include)
            : flags.format === 'scene'
              ? JSON.stringify(toPlotScene(result)) + '\n'
              : JSON.stringify(toGeoJson(result, include)) + '\n';
        if (target === null) process.stdout.write(text);
        else writeOutputFiles([{ target, data: text }]);
        const fixed = result.calls.filter((c) => c.fix.ok).length;
        const refused = result.calls.length - fixed;
        const why = new Map<string, number>();
        for (const c of result.calls) {
          // The first flag of a refused call says why it was refused.
          if (!c.fix.ok) why.set(c.fix.flags[0]!, (why.get(c.fix.flags[0]!) ?? 0) + 1);
        }
        const whyText = [...why].map(([f, n]) => `${n} ${f}`).join(', ');
        process.stderr.write(
          `bearline locate: ${fixed} fixes from ${result.calls.length} matched calls` +
            (refused > 0 ? ` (${refused} without a fix: ${whyText})` : '') +
            `, ${result.unmatched.length} events heard at one station only\n`,
        );
      }),
    );
}

/** The live mode: runs until SIGINT/SIGTERM (exit 0) or a broker lost for good (exit 1). */
async function runLive(
  placed: PlacedStations,
  source: string,
  options: LocateOptions,
  live: LiveLocateOptions,
  fleet: FleetOptions & { mqtt: string },
  feed: Parameters<typeof startFleetLocate>[0]['feed'],
): Promise<number> {
  checkLiveStations(placed, source);
  const say = (line: string): void => void process.stderr.write(`bearline: ${line}\n`);
  const run = await startFleetLocate({
    placed,
    options,
    live,
    fleet,
    feed,
    out: (line) => void process.stdout.write(line + '\n'),
    say,
    onServing: (url) => say(`fix view at ${maskToken(url)}${url.includes('token=') ? ' (the token is masked: put in the one you gave)' : ''}`),
  });
  say(`locating live from ${fleet.mqtt} (${placed.stations.length} stations under ${fleet.topicRoot}/); fixes to ${fleet.topicRoot}/fixes and stdout; stop with Ctrl-C`);
  const onSignal = (sig: string) => (): void => {
    say(`${sig}: deciding the waiting calls with what they have, then stopping`);
    void run.stop(0);
  };
  process.once('SIGINT', onSignal('SIGINT'));
  process.once('SIGTERM', onSignal('SIGTERM'));
  process.stdout.on('error', (err: NodeJS.ErrnoException) => {
    say(`cannot write to stdout (${err.code ?? err.message}): stopping`);
    void run.stop(1);
  });
  return run.done;
}

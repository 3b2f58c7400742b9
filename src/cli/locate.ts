import { existsSync } from 'node:fs';
import type { Command } from 'commander';
import { Option } from 'commander';
import { UsageError } from '../util/errors.js';
import { planOutput, writeOutputFiles } from '../sinks/output-target.js';
import { readJsonFile, readTextFile } from '../util/read-json-file.js';
import { resolveSpeedOfSound } from '../geometry/sound-speed.js';
import type { EventRecord } from '../records/record-types.js';
import { parseEventLog } from '../locate/events.js';
import { locateEventLists } from '../locate/locate.js';
import { DEFAULT_LOCATE_OPTIONS, type LocateOptions, resolveLocateOptions } from '../locate/options.js';
import { type LocateFormat, LOCATE_FORMATS, toCsv, toGeoJson, toPlotScene } from '../locate/output.js';
import { parseStationFile, placeStations } from '../locate/stations.js';
import { finiteNumber, positiveNumber } from './parse.js';
import { action } from './run-command.js';

interface LocateFlags {
  stations: string;
  out?: string;
  format: LocateFormat;
  speedOfSound?: number;
  temperature?: number;
  bearingSd: number;
  positionSd: number;
  onsetSd: number;
  clockUncertainty: number;
  syncedClockUncertainty: number;
  matchSlack: number;
  minCrossing: number;
  outlierSigma: number;
  ellipseLevel: number;
  timeDifferences: boolean;
  includeUnfixed: boolean;
}

/** Split LOG arguments into (station, file): "ID=FILE" names the station; a plain FILE relies on each record's "station". */
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

function toOptions(f: LocateFlags): Partial<LocateOptions> {
  return {
    speedOfSound: resolveSpeedOfSound({ speedOfSound: f.speedOfSound, temperature: f.temperature }),
    bearingSdDeg: f.bearingSd,
    positionSdM: f.positionSd,
    onsetSdS: f.onsetSd,
    clockUncertaintyS: f.clockUncertainty,
    syncedClockUncertaintyS: f.syncedClockUncertainty,
    matchSlackS: f.matchSlack,
    minCrossingDeg: f.minCrossing,
    outlierSigma: f.outlierSigma,
    ellipseLevel: f.ellipseLevel,
    useTimeDifferences: f.timeDifferences,
    includeUnfixed: f.includeUnfixed,
  };
}

export function registerLocate(program: Command): void {
  const d = DEFAULT_LOCATE_OPTIONS;
  program
    .command('locate')
    .summary('fix the positions of calls heard at several stations (GeoJSON with error ellipses)')
    .description(
      'Fix the positions of calls heard at several stations: match events across the stations\' logs, intersect their bearing lines ' +
        '(weighted least squares on the WGS 84 tangent plane, plus arrival-time differences where clocks are synchronised), ' +
        'and write GeoJSON points with error ellipses.',
    )
    .argument('<logs...>', 'event logs (JSON Lines); STATION=FILE assigns a whole log to a station, a plain FILE needs "station" in each record')
    .requiredOption('--stations <file>', 'station description file (JSON: ids, positions, headings, clocks)')
    .option('--out <file>', 'write the output to this file instead of stdout')
    .addOption(new Option('--format <format>', 'output format').choices(LOCATE_FORMATS).default('geojson'))
    .option('--speed-of-sound <m/s>', `speed of sound (default ${d.speedOfSound} m/s)`, positiveNumber)
    .option('--temperature <C>', 'air temperature; sets the speed of sound to 331.3 * sqrt(1 + C/273.15)', finiteNumber)
    .option('--bearing-sd <deg>', 'bearing uncertainty (one sigma) for stations without bearing_sd_deg', positiveNumber, d.bearingSdDeg)
    .option('--position-sd <m>', 'uncertainty (one sigma) of each station position', finiteNumber, d.positionSdM)
    .option('--onset-sd <s>', 'uncertainty (one sigma) of an event onset time, for arrival-time differences', positiveNumber, d.onsetSdS)
    .option('--clock-uncertainty <s>', 'clock uncertainty of unsynchronised stations after clock_offset_s (widens matching)', finiteNumber, d.clockUncertaintyS)
    .option('--synced-clock-uncertainty <s>', 'clock uncertainty of stations with clock_synced', finiteNumber, d.syncedClockUncertaintyS)
    .option('--match-slack <s>', 'extra time allowed when matching events across stations', finiteNumber, d.matchSlackS)
    .option('--min-crossing <deg>', 'smallest crossing angle of bearing lines for a fix (poorer geometry is flagged)', finiteNumber, d.minCrossingDeg)
    .option('--outlier-sigma <n>', 'a bearing missing the fix by more sigmas than this is an outlier', positiveNumber, d.outlierSigma)
    .option('--ellipse-level <p>', 'probability inside the reported error ellipse', positiveNumber, d.ellipseLevel)
    .option('--no-time-differences', 'do not use arrival-time differences between synchronised stations')
    .option('--include-unfixed', 'also report matched calls that gave no fix (GeoJSON geometry null)', d.includeUnfixed)
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

Examples:
  bearline locate --stations marsh.json reed-north=north.jsonl dyke-east=east.jsonl > calls.geojson
  bearline locate --stations marsh.json --format csv --out calls.csv all-stations.jsonl`,
    )
    .action(
      action(async (logs: string[], flags: LocateFlags) => {
        const options = resolveLocateOptions(toOptions(flags));
        const stationJson = readJsonFile(flags.stations, 'station file', '--stations');
        const placed = placeStations(parseStationFile(stationJson, flags.stations), flags.stations);
        const ids = new Set(placed.stations.map((s) => s.id));
        const lists: Record<string, EventRecord[]> = {};
        const origins: Record<string, string[]> = {};
        const logArgs = logs.map((arg) => splitLogArgument(arg, ids));
        // Nothing the user gave may be overwritten: check --out before any work.
        const target = flags.out === undefined ? null : planOutput('--out', flags.out, [flags.stations, ...logArgs.map((l) => l.file)]);
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

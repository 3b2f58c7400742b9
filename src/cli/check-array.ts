import type { Command } from 'commander';
import { runStreamedBenchCheck, type StreamedTake } from '../bench-check/bench-check.js';
import type { BenchFit } from '../bench-check/array-fit.js';
import { benchCheckOptionSpecs, resolveBenchCheckOptions, type BenchCheckOptions } from '../bench-check/options.js';
import { correctedGeometry, resultJson, textReport } from '../bench-check/report.js';
import { parseSpanList, parseTakeArgument } from '../bench-check/take-list.js';
import { tdoaPlotSvg } from '../bench-check/tdoa-plot.js';
import { checkItems } from '../bench-check/verdict.js';
import { UsageError } from '../util/errors.js';
import { checkGeometryForStream } from '../geometry/geometry-file.js';
import { planOutputs, writeOutputFiles, type OutputFile } from '../sinks/output-target.js';
import { openWavSource, type WavSource } from '../sources/wav-source.js';
import { stderrWarning } from '../util/stderr-warning.js';
import { readSettingsText } from '../util/read-json-file.js';
import { textOption, type OptionSpec } from '../options/option-spec.js';
import { arrayOptionSpecs, resolveArray, resolveSpeed, type ArrayOptionValues } from './geometry-option.js';
import { addOptions, givenOptions, readOptions } from './options.js';
import { action } from './run-command.js';

interface CheckValues {
  spans: string | null;
  json: string | null;
  report: string | null;
  writeGeometry: string | null;
}

const checkOptionSpecs: readonly OptionSpec<keyof CheckValues>[] = [
  textOption('spans', 'spans', 'list', null, 'span list for one long recording: FROM_S TO_S AZ_DEG [EL_DEG] per line', { defaultText: 'none' }),
  textOption('json', 'json', 'file', null, 'write the results as JSON (spacing_m, positions_m, offset_s, channels_swapped, polarity_inverted, gain_db, drift_ppm, residual_deg_rms, per-take delays, checks)', { defaultText: 'none' }),
  textOption('report', 'report', 'file.svg|file.html', null, 'write a plot of measured against expected tdoa per pair', { defaultText: 'none' }),
  textOption('writeGeometry', 'write-geometry', 'file', null, 'write a geometry file with the fitted positions (never the input geometry)', { defaultText: 'none' }),
];

interface LoadedTakes {
  takes: StreamedTake[];
  sampleRate: number;
  channels: number;
  inputs: string[];
  /** Close the opened recordings. */
  close(): Promise<void>;
}

/** Blocks of 64 Ki frames: at 8 channels of float samples, 2 MiB per read. */
const TAKE_BLOCK_FRAMES = 65536;

/**
 * Open every recording once (the scan's WAV source: any length, RF64, a truncated file read to
 * where it ends with a warning; no device, FIFO or directory) and plan the takes; nothing is
 * read beyond the headers yet.
 */
async function loadTakes(args: readonly string[], spansPath: string | null): Promise<LoadedTakes> {
  const opened = new Map<string, WavSource>();
  const open = async (path: string): Promise<WavSource> => {
    let w = opened.get(path);
    if (!w) {
      w = await openWavSource(path, { blockFrames: TAKE_BLOCK_FRAMES, onWarning: stderrWarning });
      opened.set(path, w);
    }
    return w;
  };
  const close = async (): Promise<void> => {
    for (const w of opened.values()) await w.close();
  };
  try {
    const takes: StreamedTake[] = [];
    const inputs: string[] = [];
    if (spansPath !== null) {
      if (args.length !== 1 || /^[-+.\d]/.test(args[0]!) && args[0]!.includes('=')) {
        throw new UsageError('with --spans give exactly one recording (a plain REC.wav, the directions come from the span list)');
      }
      const rec = args[0]!;
      const spans = parseSpanList(readSpanList(spansPath), `span list ${spansPath}`);
      const w = await open(rec);
      const length = w.format.totalFrames ?? 0;
      const rate = w.format.sampleRate;
      for (const s of spans) {
        if (s.toS > length / rate + 1e-9) {
          throw new UsageError(`span list ${spansPath} line ${s.line}: the span ends at ${s.toS} s but ${rec} lasts ${(length / rate).toFixed(3)} s; fix the span`);
        }
        const start = Math.round(s.fromS * rate);
        const end = Math.min(length, Math.round(s.toS * rate));
        takes.push({ label: `${s.fromS}-${s.toS}s`, azimuthDeg: s.azimuthDeg, elevationDeg: s.elevationDeg, recording: rec, frames: end - start, blocks: () => w.span(start, end) });
      }
      inputs.push(rec, spansPath);
    } else {
      if (args.length === 0) throw new UsageError('give the takes: AZ=REC.wav for each source direction (or one REC.wav with --spans LIST)');
      for (const arg of args) {
        const t = parseTakeArgument(arg);
        const w = await open(t.path);
        takes.push({ label: arg, azimuthDeg: t.azimuthDeg, elevationDeg: t.elevationDeg, recording: t.path, frames: w.format.totalFrames ?? 0, blocks: () => w.blocks() });
        inputs.push(t.path);
      }
    }
    const first = opened.values().next().value as WavSource;
    for (const [path, w] of opened) {
      if (w.format.sampleRate !== first.format.sampleRate) throw new UsageError(`${path} is at ${w.format.sampleRate} Hz but the other takes at ${first.format.sampleRate} Hz: record every take at one rate`);
      if (w.format.channels !== first.format.channels) throw new UsageError(`${path} has ${w.format.channels} channels but the other takes ${first.format.channels}: record every take with the whole array`);
    }
    return { takes, sampleRate: first.format.sampleRate, channels: first.format.channels, inputs, close };
  } catch (err) {
    await close();
    throw err;
  }
}

function readSpanList(path: string): string {
  return readSettingsText(path, 'the span list', '--spans');
}

async function checkArray(args: string[], cmd: Command): Promise<void> {
  for (const a of args) {
    if (a.startsWith('-') && !/^-[\d.]/.test(a)) throw new UsageError(`unknown option '${a.split('=')[0]}' (run bearline check-array --help for the options)`);
  }
  const flags = readOptions<CheckValues>(cmd, checkOptionSpecs);
  const opts: BenchCheckOptions = resolveBenchCheckOptions(givenOptions<BenchCheckOptions>(cmd, benchCheckOptionSpecs));
  const array = givenOptions<ArrayOptionValues>(cmd, arrayOptionSpecs);
  const geometry = resolveArray(array);
  const c = resolveSpeed(array);
  if (flags.report !== null && !/\.(svg|html?)$/i.test(flags.report)) throw new UsageError(`--report ${flags.report} must end in .svg or .html`);
  const outputs = [
    { option: '--json', path: flags.json },
    { option: '--report', path: flags.report },
    { option: '--write-geometry', path: flags.writeGeometry },
  ].filter((o): o is { option: string; path: string } => o.path !== null);
  const inputPaths = [...args.map((a) => (a.includes('=') ? a.slice(a.indexOf('=') + 1) : a)), ...(flags.spans ? [flags.spans] : []), ...(array.array ? [array.array] : [])];
  const planned = new Map(planOutputs(outputs, inputPaths).map((t) => [t.option, t]));

  const loaded = await loadTakes(args, flags.spans);
  let fit: BenchFit;
  try {
    if (loaded.channels < 2) throw new UsageError('the takes have one channel: an array check needs one channel per mic');
    checkGeometryForStream(geometry, loaded.channels, loaded.sampleRate, c, 'the takes');
    for (const t of loaded.takes) {
      if (t.frames < 0.05 * loaded.sampleRate) throw new UsageError(`take ${t.label} is shorter than 50 ms: give takes of a second or more`);
    }
    fit = await runStreamedBenchCheck(geometry, c, loaded.sampleRate, loaded.channels, loaded.takes, opts, (t, got) =>
      stderrWarning(`take ${t.label} ended after ${(got / loaded.sampleRate).toFixed(1)} s of ${(t.frames / loaded.sampleRate).toFixed(1)} s (its file is shorter than it says); measured over what it holds`),
    );
  } finally {
    await loaded.close();
  }
  const items = checkItems(fit, opts);
  const ctx = { geometry, sampleRate: loaded.sampleRate, speedOfSound: c };
  const text = textReport(fit, items, ctx);

  const files: OutputFile[] = [];
  if (flags.json) files.push({ target: planned.get('--json')!, data: JSON.stringify(resultJson(fit, items, ctx), null, 2) + '\n' });
  if (flags.report) {
    const svg = tdoaPlotSvg(fit, `bench check of ${geometry.name}`);
    const data = /\.svg$/i.test(flags.report) ? svg : htmlPage(geometry.name, svg, text);
    files.push({ target: planned.get('--report')!, data });
  }
  if (flags.writeGeometry) {
    const g = correctedGeometry(fit, geometry);
    if (!g) throw new UsageError('--write-geometry: the takes do not determine the mic positions (see the notes); record more directions, nothing was written');
    files.push({ target: planned.get('--write-geometry')!, data: JSON.stringify(g, null, 2) + '\n' });
  }
  writeOutputFiles(files);
  process.stdout.write(text);
}

function htmlPage(name: string, svg: string, text: string): string {
  const esc = (s: string): string => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
  return `<!doctype html>\n<html><head><meta charset="utf-8"><title>bench check of ${esc(name)}</title></head>\n<body>\n<pre>${esc(text)}</pre>\n${svg}</body></html>\n`;
}

export function registerCheckArray(program: Command): void {
  const cmd = program
    .command('check-array')
    .summary('bench check of an array: spacing or positions, channel order, polarity, timing, gain, clock drift')
    .description(
      'Check an array on the bench from recordings of a test sound played from known directions ' +
        '(make one with bearline stimulus; mind its safe-level caution). By least squares over all pairs and ' +
        'takes it fits the mic positions (a pair: its spacing), a timing offset and a clock drift per channel, ' +
        'and finds swapped channels, inverted polarity and gain mismatch; each item passes, warns or fails ' +
        'against the tolerances below. Offsets, drift, gain and polarity are relative to channel 0. A ' +
        'readable report goes to stdout.\n\n' +
        'Takes: AZ=REC.wav (horizontal) or AZ,EL=REC.wav per direction, degrees in the array frame ' +
        '(azimuth 0 = front, +90 = right). Or one long REC.wav with --spans LIST, a text file with one ' +
        'line per take: FROM_S TO_S AZ_DEG [EL_DEG] (# starts a comment).',
    )
    .argument('<takes...>', 'AZ=REC.wav or AZ,EL=REC.wav per direction; with --spans one REC.wav')
    // A take with a negative azimuth (-30=left.wav) looks like an option to commander: let it
    // through and tell real unknown options apart in the action.
    .allowUnknownOption();
  addOptions(cmd, [...arrayOptionSpecs, ...checkOptionSpecs, ...benchCheckOptionSpecs]);
  cmd.addHelpText(
    'after',
    '\nExamples:\n' +
      '  bearline check-array --spacing 0.2 -60=m60.wav -30=m30.wav 0=z.wav 30=p30.wav 60=p60.wav --json pair.json\n' +
      '  bearline check-array --array square-10cm.json 0=a.wav 90=b.wav 180=c.wav -90=d.wav --report fit.svg --write-geometry fixed.json\n' +
      '  bearline check-array --array cube.json --spans bench-spans.txt long-take.wav\n' +
      '\nThe exit code is 0 whatever the verdict (read "verdict" in --json); 2 for bad input.\n',
  );
  cmd.action(action(async (takes: string[]) => checkArray(takes, cmd)));
}

import { existsSync, statSync } from 'node:fs';
import { basename, dirname, resolve } from 'node:path';
import type { Command } from 'commander';
import { UsageError } from '../util/errors.js';
import { geometryToJson, type GeometryJson } from '../geometry/geometry-file.js';
import { planOutputs, writeOutputFiles } from '../sinks/output-target.js';
import { wavFileChunks } from '../sinks/wav-writer.js';
import { renderScene, sceneSamples } from '../sim/render.js';
import { demoScenePath, loadSceneFile } from '../sim/scene.js';
import { TRUTH_STEP_S, truthRecords } from '../sim/truth.js';
import { createProgress } from './progress.js';
import { flagOption, textOption } from '../options/option-spec.js';
import { addOptions, readOptions } from './options.js';
import { action } from './run-command.js';

/** The options of `bearline simulate` (their one home). */
export interface SimulateOptions {
  /** Scene file; the built-in demo scene when absent. */
  scene?: string;
  /** Output WAV path; the truth and array files are written beside it. */
  out: string;
  /** Write 32-bit float samples instead of 16-bit integers. */
  float: boolean;
}

/** Scenes longer than this (s) show a progress bar (on a terminal). */
const PROGRESS_MIN_DURATION_S = 5;

/** REC.wav -> REC.truth.jsonl and REC.array.json. */
export function outputPaths(out: string): { wav: string; truth: string; array: string } {
  if (!/\.wav$/i.test(out)) throw new UsageError(`--out ${out} must name a .wav file (e.g. --out rec.wav)`);
  const stem = out.slice(0, -4);
  return { wav: out, truth: `${stem}.truth.jsonl`, array: `${stem}.array.json` };
}

/** A geometry file with one line per mic, like the presets in configs/arrays. */
function geometryText(g: GeometryJson): string {
  const { mics, ...rest } = g;
  const head = JSON.stringify(rest, null, 2).slice(0, -2);
  return `${head},\n  "mics": [\n${mics.map((m) => `    ${JSON.stringify(m)}`).join(',\n')}\n  ]\n}\n`;
}

export function runSimulate(opts: SimulateOptions): void {
  const paths = outputPaths(opts.out);
  const dir = dirname(resolve(paths.wav));
  if (!existsSync(dir) || !statSync(dir).isDirectory()) {
    throw new UsageError(`the output directory ${dirname(paths.wav)} does not exist: create it first or give another --out`);
  }
  const scenePath = opts.scene ?? demoScenePath();
  const { scene, inputFiles } = loadSceneFile(scenePath);
  const [wavOut, truthOut, arrayOut] = planOutputs(
    [
      { option: '--out', path: paths.wav },
      { option: '--out (truth)', path: paths.truth },
      { option: '--out (array)', path: paths.array },
    ],
    inputFiles,
  );
  const total = sceneSamples(scene);
  const bar = scene.durationS >= PROGRESS_MIN_DURATION_S ? createProgress(`simulating ${basename(scenePath)}`, total, scene.sampleRate) : null;
  const rendered = renderScene(scene, (d) => bar?.update(d * total));
  bar?.finish();
  const truth = truthRecords(scene, rendered.calls);
  const geometry = scene.array.headingFromScene ? { ...scene.array.geometry, headingDeg: scene.array.headingDeg } : scene.array.geometry;

  let clipped = 0;
  if (!opts.float) for (const ch of rendered.channels) for (const v of ch) if (v > 1 || v < -1) clipped++;

  writeOutputFiles([
    { target: wavOut!, data: wavFileChunks(scene.sampleRate, rendered.channels, opts.float ? 'f32' : 's16') },
    { target: truthOut!, data: truth.map((r) => JSON.stringify(r)).join('\n') + (truth.length ? '\n' : '') },
    { target: arrayOut!, data: geometryText(geometryToJson(geometry)) },
  ]);
  if (clipped > 0) {
    process.stderr.write(`bearline: warning: ${clipped} samples clipped at full scale: lower the source levels or use --float\n`);
  }
  // Said on stderr (stdout stays for data): what was written, so a run is not silent.
  const calls = new Set(truth.map((r) => r.source)).size;
  process.stderr.write(
    `bearline: wrote ${paths.wav} (${scene.durationS} s, ${rendered.channels.length} channels, ${scene.sampleRate} Hz${opts.float ? ', float' : ''}), ` +
      `its truth ${paths.truth} (${calls} source${calls === 1 ? '' : 's'}) and array ${paths.array}\n`,
  );
}

const simulateOptionSpecs = [
  textOption('scene', 'scene', 'file', null, 'scene file (JSON)', { defaultText: 'the built-in demo configs/scenes/wetland-dusk.json' }),
  textOption('out', 'out', 'rec.wav', null, 'output WAV file; REC.truth.jsonl and REC.array.json are written beside it; required', { defaultText: 'none' }),
  flagOption('float', 'float', false, 'write 32-bit float samples (default: 16-bit integers, clipped at full scale)'),
];

export function registerSimulate(program: Command): void {
  const cmd = program
    .command('simulate')
    .summary('render a scene (array, callers, room, wind) to a WAV file with its true directions')
    .description(
      'Render a scene (array, sources, room, noise) to a multichannel WAV file, with the true directions ' +
        `beside it: REC.truth.jsonl (one record per ${TRUTH_STEP_S * 1000} ms per active source, in the array's frame) ` +
        'and REC.array.json (the array geometry). Without --scene it renders the built-in wetland demo scene.',
    )
;
  addOptions(cmd, simulateOptionSpecs);
  cmd
    .addHelpText(
      'after',
      '\nTruth records: {"time_s", "source", "azimuth_deg", "elevation_deg"}, time_s from the start, one per\n' +
        `${TRUTH_STEP_S * 1000} ms step while a source's direct sound reaches the array centre.\n` +
        'Caution: when you play a rendered scene through speakers or earphones, start at a low volume.',
    )
    .action(
      action(async () => {
        const v = readOptions<{ scene: string | null; out: string | null; float: boolean }>(cmd, simulateOptionSpecs);
        if (v.out === null) throw new UsageError('give the WAV file to write with --out REC.wav');
        runSimulate({ scene: v.scene ?? undefined, out: v.out, float: v.float });
      }),
    );
}

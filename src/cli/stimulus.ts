import type { Command } from 'commander';
import { UsageError } from '../util/errors.js';
import { renderStimulus, resolveStimulusOptions, stimulusOptionSpecs, type StimulusOptions } from '../stimulus/bench-signals.js';
import { planOutput, writeOutputFiles } from '../sinks/output-target.js';
import { wavFileChunks } from '../sinks/wav-writer.js';
import { textOption } from '../options/option-spec.js';
import { addOptions, givenOptions, readOptions } from './options.js';

const OUT_SPEC = textOption('out', 'out', 'file.wav', null, 'the WAV file to write (written aside, renamed when complete); required', { defaultText: 'none' });
import { action } from './run-command.js';

export const SAFE_LEVEL_CAUTION =
  'CAUTION: test signals can damage hearing and speakers. Before you play one through speakers or ' +
  'earphones, turn the playback volume all the way down, then raise it slowly until the recording is ' +
  'clear with its peaks well under full scale. Do not wear earphones or headphones while they play a ' +
  'test signal; keep people and animals at a distance, and wear hearing protection if the sound is ' +
  'uncomfortable. Sweeps put much energy into tweeters at their top end; clicks are louder than a level ' +
  'meter suggests.';

function writeStimulus(out: string, o: StimulusOptions): void {
  if (!/\.wav$/i.test(out)) throw new UsageError(`--out ${out} must name a .wav file`);
  const target = planOutput('--out', out);
  const channels = renderStimulus(o);
  writeOutputFiles([{ target, data: wavFileChunks(o.sampleRate, channels, 's24') }]);
  const total = channels[0]!.length / o.sampleRate;
  process.stderr.write(`bearline: wrote ${out}: ${o.kind}, ${o.repetitions} x ${o.durationS} s, ${total.toFixed(2)} s in all, peak ${o.levelDbfs} dBFS, ${o.sampleRate} Hz, ${o.channels} channel${o.channels === 1 ? '' : 's'}\n`);
}

export function registerStimulus(program: Command): void {
  const cmd = program
    .command('stimulus')
    .summary('write a bench test signal (log sweep, clicks, noise bursts) to a WAV file')
    .description(
      'Write a test signal for the bench check (bearline check-array) to a 24-bit WAV file: an exponential ' +
        'sine sweep, a click train or noise bursts, repeated after silences, at a chosen peak level.\n\n' +
        SAFE_LEVEL_CAUTION,
    );
  addOptions(cmd, [OUT_SPEC, ...stimulusOptionSpecs]);
  cmd.addHelpText(
    'after',
    '\nExamples:\n' +
      '  bearline stimulus --out sweep.wav                      # 3 sweeps of 3 s, 100 Hz to 16 kHz, peak -20 dBFS\n' +
      '  bearline stimulus --out bursts.wav --kind noise --duration 10 --repeat 1 --level -26\n' +
      '  bearline stimulus --out clicks.wav --kind clicks --click-interval 0.5\n',
  );
  cmd.action(
    action(async () => {
      const { out } = readOptions<{ out: string | null }>(cmd, [OUT_SPEC]);
      if (out === null) throw new UsageError('give the file to write with --out FILE.wav');
      const opts = resolveStimulusOptions(givenOptions<StimulusOptions>(cmd, stimulusOptionSpecs));
      writeStimulus(out, opts);
    }),
  );
}

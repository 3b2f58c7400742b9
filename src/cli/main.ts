#!/usr/bin/env node
import { Command, CommanderError } from 'commander';
import { failAndExit } from './run-command.js';
import { registerCheckArray } from './check-array.js';
import { registerStimulus } from './stimulus.js';
import { registerAccuracy } from './accuracy.js';
import { registerDemo } from './demo.js';
import { registerListen } from './listen.js';
import { registerLocate } from './locate.js';
import { registerReport } from './report.js';
import { registerScan } from './scan.js';
import { registerSimulate } from './simulate.js';

// A closed pipe (e.g. `bearline scan ... | head`) ends the run quietly: the reader has all it wants.
process.stdout.on('error', (err: NodeJS.ErrnoException) => {
  if (err.code === 'EPIPE') process.exit(0);
  failAndExit(err);
});

const program = new Command();
program
  .name('bearline')
  .description('Real-time sound-direction tracker for small microphone arrays (GCC-PHAT, SRP-PHAT).')
  .version('0.1.0')
  .exitOverride()
  // commander's own usage errors (unknown option, bad value) as one line, like every other error.
  .configureOutput({ outputError: (text, write) => write(`bearline: ${text.replace(/^error: /, '').trim()} (see --help)\n`) });

registerScan(program);
registerListen(program);
registerLocate(program);
registerReport(program);
registerSimulate(program);
registerCheckArray(program);
registerStimulus(program);
registerAccuracy(program);
registerDemo(program);

program.parseAsync(process.argv).catch((err: unknown) => {
  if (err instanceof CommanderError) {
    // commander already printed its message; --help and --version exit 0, usage errors 2.
    process.exit(err.exitCode === 0 ? 0 : 2);
  }
  failAndExit(err);
});

import type { Command } from 'commander';
import { UsageError } from '../errors.js';
import { action } from './run-command.js';

export function registerScan(program: Command): void {
  program
    .command('scan')
    .description('Scan a recording for sound directions (work in progress).')
    .argument('<file>', 'WAV file to scan')
    .action(
      action(async () => {
        throw new UsageError('scan is not built yet');
      }),
    );
}

import type { Command } from 'commander';
import { UsageError } from '../util/errors.js';
import { stderrWarning } from '../util/stderr-warning.js';
import { planOutput, writeOutputFiles } from '../sinks/output-target.js';
import { listLogInputs } from '../report/log-input.js';
import { buildReport } from '../report/report.js';
import { reportOptionSpecs, type ReportOptions } from '../report/report-options.js';
import { addOptions, readOptions } from './options.js';
import { createByteProgress } from './progress.js';
import { action } from './run-command.js';

export function registerReport(program: Command): void {
  const cmd = program
    .command('report')
    .summary('one HTML page of a night (or a week) of calls: bearing against time, directions per track, calls per hour')
    .description(
      'Draw event logs (JSON Lines or CSV as scan and the station write them, a station\'s rotated files, or a folder of them) ' +
        'as one self-contained HTML file: bearing against time for the whole span with capture gaps shaded, a polar ' +
        'histogram of directions per track, calls per hour, a table per track and the station\'s details. The logs are ' +
        'read as streams (twice), so a week of logs takes seconds and little memory.',
    )
    .argument('<logs...>', 'event logs (JSON Lines or CSV; gap logs too), or folders holding a station\'s logs');
  addOptions(cmd, reportOptionSpecs);
  cmd.addHelpText(
    'after',
    '\nExamples:\n' +
      '  bearline report night.events.jsonl --out night.html\n' +
      '  bearline report /var/lib/bearline/logs --out week.html\n' +
      '  bearline report logs/ --from 2026-05-01T20:00Z --to 2026-05-02T06:00Z --tracks 1,2 --out dusk.html',
  );
  cmd.action(
    action(async (logs: string[]) => {
      const options = readOptions<ReportOptions>(cmd, reportOptionSpecs);
      if (options.out === null) throw new UsageError('give the HTML file to write with --out FILE.html');
      const inputs = listLogInputs(logs);
      // Checked before any reading: the page may not land on a log or in a missing folder.
      const target = planOutput('--out', options.out, inputs.map((i) => i.path));
      const total = inputs.reduce((n, i) => n + i.size, 0);
      const progress = createByteProgress('bearline report', 2 * total);
      const result = await buildReport(inputs, options, { onBytes: (n) => progress.update(n), onWarning: stderrWarning, version: program.version() ?? '' });
      progress.finish();
      writeOutputFiles([{ target, data: result.html }]);
      process.stderr.write(
        `bearline report: ${options.out}: ${result.calls} calls on ${result.tracks} tracks (${result.drawnPoints} drawn), ${result.gaps} capture gaps, from ${inputs.length} files\n`,
      );
    }),
  );
}

/**
 * The README's option tables against the option specs (src/options/option-spec.ts), which are
 * also what --help shows: every row names real options with their placeholder and the default
 * the program uses, and every table lists all the options of its stage. So the README, --help
 * and the program cannot disagree on a default.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analysisOptionSpecs } from '../../src/analysis/analysis-options.js';
import { feedOptionSpecs } from '../../src/feed/feed-options.js';
import { fleetOptionSpecs } from '../../src/fleet/fleet-options.js';
import { liveLocateOptionSpecs } from '../../src/locate/live-options.js';
import { locateOptionSpecs } from '../../src/locate/options.js';
import { defaultText, usageOf, type OptionSpec } from '../../src/options/option-spec.js';
import { mqttOptionSpecs } from '../../src/sinks/mqtt-options.js';
import { recordLogOptionSpecs } from '../../src/sinks/record-log-options.js';
import { RECORDER_OPTION_SPECS } from '../../src/sources/recorder-options.js';
import { reportOptionSpecs } from '../../src/report/report-options.js';
import { stationOptionSpecs } from '../../src/station/runtime-options.js';
import { trackerOptionSpecs } from '../../src/track/options.js';

const README = readFileSync(new URL('../../README.md', import.meta.url), 'utf8');

/** The stages whose options the README lists in tables. */
const GROUPS: Record<string, readonly OptionSpec[]> = {
  analysis: analysisOptionSpecs,
  tracker: trackerOptionSpecs,
  feed: feedOptionSpecs,
  'station and log': [...stationOptionSpecs, ...recordLogOptionSpecs],
  mqtt: mqttOptionSpecs,
  recorder: RECORDER_OPTION_SPECS,
  report: reportOptionSpecs,
  locate: locateOptionSpecs,
  'locate live': [...fleetOptionSpecs, ...liveLocateOptionSpecs],
};

interface Row {
  line: number;
  /** Each option of the row as written (`--min-freq <hz>`), and its default. */
  options: { usage: string; shown: string }[];
}

/** Split a table row into cells; `\|` is a | inside a cell. */
function cells(line: string): string[] {
  return line
    .replace(/\\\|/g, '\u0000')
    .split('|')
    .slice(1, -1)
    .map((c) => c.replace(/\u0000/g, '|').trim());
}

/** Every table whose header is "option | default | meaning". */
export function optionTables(text: string): Row[][] {
  const lines = text.split('\n');
  const tables: Row[][] = [];
  for (let i = 0; i < lines.length; i++) {
    const head = lines[i]!.startsWith('|') ? cells(lines[i]!) : [];
    if (head[0] !== 'option' || head[1] !== 'default') continue;
    const rows: Row[] = [];
    for (let j = i + 2; j < lines.length && lines[j]!.startsWith('|'); j++) {
      const [opt, def] = cells(lines[j]!);
      const usages = opt!.split(' / ').map((u) => u.replace(/^`|`$/g, ''));
      const shown = usages.length > 1 ? def!.split(' / ') : [def!];
      rows.push({ line: j + 1, options: usages.map((usage, k) => ({ usage, shown: shown[k] ?? '(missing)' })) });
    }
    tables.push(rows);
  }
  return tables;
}

describe('README option tables (checked against the specs that also make --help)', () => {
  const tables = optionTables(README);

  it('finds the tables, and the reader sees a planted wrong default (the check can fail)', () => {
    expect(tables.length).toBe(Object.keys(GROUPS).length);
    const planted = optionTables('| option | default | meaning |\n| --- | --- | --- |\n| `--gate <sigma>` | 3 | gate |\n| `--a <x>` / `--b <y>` | 1 / 2 | two |\n');
    expect(planted[0]![0]!.options).toEqual([{ usage: '--gate <sigma>', shown: '3' }]);
    expect(planted[0]![1]!.options.map((o) => o.shown)).toEqual(['1', '2']);
    const gate = trackerOptionSpecs.find((s) => s.name === 'gate')!;
    expect(defaultText(gate)).not.toBe(planted[0]![0]!.options[0]!.shown);
  });

  it.each(Object.entries(GROUPS))('the %s table names every option once, with its placeholder and the default --help shows', (group, specs) => {
    const table = tables.find((t) => t.every((r) => r.options.every((o) => specs.some((s) => usageOf(s) === o.usage))));
    expect(table, `no README table holds only ${group} options`).toBeDefined();
    const listed = table!.flatMap((r) => r.options.map((o) => ({ ...o, line: r.line })));
    const wrong = listed
      .map((o) => ({ ...o, spec: specs.find((s) => usageOf(s) === o.usage)! }))
      .filter((o) => o.shown !== defaultText(o.spec))
      .map((o) => `README line ${o.line}: ${o.usage} shows default '${o.shown}', the program uses '${defaultText(o.spec)}'`);
    expect(wrong).toEqual([]);
    const names = listed.map((o) => o.usage);
    expect(new Set(names).size).toBe(names.length);
    expect(specs.map(usageOf).filter((u) => !names.includes(u))).toEqual([]);
  });
});

/**
 * A week of station logs (7 daily files, ~300 000 calls, ~60 MB, written by the test) makes a
 * report in bounded memory: the report streams the files and keeps bins, not calls. Measured
 * as the growth of V8's old space (where objects that stay alive end up) during the run,
 * against a control that keeps every call read (the check can fail). No timing asserted
 * (rules: speed figures go in benchmarks); the duration is printed.
 */
import { getHeapSpaceStatistics } from 'node:v8';
import { beforeAll, describe, expect, it } from 'vitest';
import { listLogInputs, readLogItems } from '../../src/report/log-input.js';
import type { LogItem } from '../../src/report/log-records.js';
import { TIME_BINS, POINTS_PER_BIN } from '../../src/report/night-bins.js';
import { buildReport } from '../../src/report/report.js';
import { tempDir } from '../helpers/temp-dir.js';
import { writeWeekLogs, type WeekLogs } from './week-logs.js';

function oldSpaceUsed(): number {
  return getHeapSpaceStatistics().find((s) => s.space_name === 'old_space')!.space_used_size;
}

describe('report on a week of logs', () => {
  const dir = tempDir('report-week').dir;
  let week: WeekLogs;
  beforeAll(() => {
    week = writeWeekLogs(dir, 7, 2);
  });

  it('holds bins, not calls: old-space growth stays under 24 MB where keeping the calls takes over 40 MB', async () => {
    expect(week.calls).toBeGreaterThan(250_000);
    const inputs = listLogInputs([dir]);
    expect(inputs).toHaveLength(8); // 7 daily event files and the gaps file, found by name in the folder
    const base = oldSpaceUsed();
    let peak = 0;
    const started = performance.now();
    const result = await buildReport(inputs, { out: null, from: null, to: null, tracks: null, title: null }, { onBytes: () => (peak = Math.max(peak, oldSpaceUsed() - base)) });
    const ms = performance.now() - started;
    console.log(`week report: ${result.calls} calls, ${(week.bytes / 1e6).toFixed(0)} MB of logs read twice in ${(ms / 1000).toFixed(1)} s; old space grew at most ${(peak / 1e6).toFixed(1)} MB; page ${(result.html.length / 1e6).toFixed(2)} MB`);
    expect(result.calls).toBe(week.calls);
    expect(result.gaps).toBe(1);
    expect(result.drawnPoints).toBeLessThanOrEqual(TIME_BINS * POINTS_PER_BIN * result.tracks);
    expect(result.html.length).toBeLessThan(3e6);
    expect(peak).toBeLessThan(24e6);

    // Control: the same files read with every call kept.
    const kept: LogItem[] = [];
    const base2 = oldSpaceUsed();
    let peak2 = 0;
    for (const input of inputs) await readLogItems(input, (item) => kept.push(item), () => (peak2 = Math.max(peak2, oldSpaceUsed() - base2)), () => undefined);
    console.log(`control keeping ${kept.length} calls: old space grew ${(peak2 / 1e6).toFixed(1)} MB`);
    expect(kept.length).toBe(week.calls + 1);
    expect(peak2).toBeGreaterThan(40e6);
  });
});

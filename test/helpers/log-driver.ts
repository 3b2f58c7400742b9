/**
 * Test driver: writes numbered event records through the record log as fast as it can.
 *
 *   node --import tsx test/helpers/log-driver.ts DIR COUNT [ROTATE_SIZE]
 *
 * COUNT 0 means "until a signal". The record number is in `track` (and start_s = number / 10).
 * On start it resumes after the highest number already on disk. After every 500 records it
 * prints "at N" on stdout, meaning records below N have returned from write(). SIGTERM and
 * SIGINT go through the station shutdown helper, which prints "closed after N" first.
 */
import { readFileSync } from 'node:fs';
import { listLogFiles, RecordLog } from '../../src/sinks/record-log.js';
import { installShutdown } from '../../src/station/shutdown.js';
import { DRIVER_STATION } from './log-files.js';

function lastNumberOnDisk(dir: string): number {
  const files = listLogFiles(dir, DRIVER_STATION, 'events');
  for (let i = files.length - 1; i >= 0; i--) {
    const lines = readFileSync(files[i]!.path, 'utf8').split('\n').filter((l) => l !== '');
    const last = lines[lines.length - 1];
    if (last) return (JSON.parse(last) as { track: number }).track;
  }
  return -1;
}

const [dir, countText, rotateText] = process.argv.slice(2);
if (!dir || countText === undefined) {
  process.stderr.write('usage: log-driver DIR COUNT [ROTATE_SIZE]\n');
  process.exit(2);
}
const count = Number(countText);
const log = new RecordLog(DRIVER_STATION, { logDir: dir, rotateSize: Number(rotateText ?? 65536), fsyncEvery: 0.2 }, {
  onWarning: (m) => process.stderr.write(`warning: ${m}\n`),
});
let next = lastNumberOnDisk(dir) + 1;
const first = next;
let stopped = false;
installShutdown([log], {
  stopInput: () => {
    stopped = true;
    process.stdout.write(`closed after ${next}\n`);
  },
  log: (line) => process.stderr.write(`${line}\n`),
});

function batch(): void {
  if (stopped) return;
  for (let i = 0; i < 500; i++) {
    if (count > 0 && next - first >= count) {
      log.close();
      process.stdout.write(`done at ${next}\n`);
      return;
    }
    log.event({ start_s: next / 10, end_s: next / 10 + 0.05, azimuth_deg: (next % 360) - 179, spread_deg: 1.5, confidence: 0.8, track: next });
    next++;
  }
  process.stdout.write(`at ${next}\n`);
  setImmediate(batch);
}
batch();

/**
 * A station folder with a week of event logs, written fast for tests: one events file per UTC
 * day (the record log's names, STATION.events.YYYYMMDDT000000Z.jsonl) and one gaps file.
 * Invented data (test only): a chorus calling from the north-east at night, a second from the
 * south-west, a few birds by day; one call every `everyS` seconds on average.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';

export const WEEK_START_UTC_S = Date.UTC(2026, 4, 1) / 1000;

export interface WeekLogs {
  readonly files: string[];
  readonly calls: number;
  readonly bytes: number;
}

export function writeWeekLogs(dir: string, days: number, everyS: number, station = 'marsh-east'): WeekLogs {
  const files: string[] = [];
  let calls = 0;
  let bytes = 0;
  let seed = 12345;
  const rand = (): number => {
    seed = (seed * 1103515245 + 12345) & 0x7fffffff;
    return seed / 0x7fffffff;
  };
  for (let d = 0; d < days; d++) {
    const day0 = WEEK_START_UTC_S + d * 86400;
    const lines: string[] = [];
    for (let t = 0; t < 86400; t += everyS * (0.5 + rand())) {
      const hour = t / 3600;
      const night = hour < 5 || hour > 20;
      const track = night ? (rand() < 0.6 ? 1 : 2) : 3 + Math.floor(rand() * 4);
      const base = track === 1 ? 45 : track === 2 ? 225 : (hour * 15 + track * 40) % 360;
      const bearing = (base + (rand() - 0.5) * 6 + 360) % 360;
      const utc = new Date((day0 + t) * 1000).toISOString();
      const az = ((bearing - 30 + 540) % 360) - 180;
      lines.push(
        `{"start_s":${(d * 86400 + t).toFixed(3)},"end_s":${(d * 86400 + t + 0.3).toFixed(3)},"utc":"${utc}","azimuth_deg":${az.toFixed(2)},"spread_deg":1.2,"confidence":0.85,"track":${track},"peak_dbfs":-31.5,"band_hz":[400,2200],"bearing_deg":${bearing.toFixed(2)}}`,
      );
    }
    const name = join(dir, `${station}.events.${new Date(day0 * 1000).toISOString().slice(0, 10).replace(/-/g, '')}T000000Z.jsonl`);
    const text = lines.join('\n') + '\n';
    writeFileSync(name, text);
    files.push(name);
    calls += lines.length;
    bytes += text.length;
  }
  const gaps = join(dir, `${station}.gaps.20260501T000000Z.jsonl`);
  const g1 = new Date((WEEK_START_UTC_S + 2 * 86400 + 3 * 3600) * 1000).toISOString();
  writeFileSync(gaps, `{"gap":"device lost","start_s":${2 * 86400 + 3 * 3600},"end_s":${2 * 86400 + 5 * 3600},"utc":"${g1}"}\n`);
  files.push(gaps);
  return { files, calls, bytes };
}

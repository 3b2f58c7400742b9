/**
 * Benchmark: peak RSS of `bearline check-array` with a short and a long take (4 channels,
 * 48 kHz, 16-bit, square-10cm), measured by /usr/bin/time (%M, max resident set), and their
 * ratio. check-array streams each take through the scan's WAV source, so the peak should not
 * grow with the take's length (before, a 1-hour 4-channel take peaked at 4.1 GB).
 *
 * The takes are sox-made noise with whole-sample channel delays for a source at 0, 90 and 180
 * degrees (a far-field source on the square: the far pair of mics hears it d / c = 0.1 / 343 s
 * later, common practice, no source). Not a timed test: figures only.
 *
 * Run alone: npx tsx test/bench/check-array-rss.ts [long-minutes]   (default 30)
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const BIN = fileURLToPath(new URL('../../dist/cli/main.js', import.meta.url));
const LATE = (0.1 / 343).toFixed(7);

/** Channel delays (s) per direction for square-10cm (mics: front-left, front-right, back-right, back-left). */
const DELAYS: Record<number, string[]> = {
  0: ['0', '0', LATE, LATE],
  90: [LATE, '0', '0', LATE],
  180: [LATE, LATE, '0', '0'],
};

function take(dir: string, name: string, az: number, seconds: number): string {
  const path = join(dir, name);
  execFileSync('sox', ['-R', '-n', '-r', '48000', '-c', '4', '-b', '16', path, 'synth', String(seconds), 'whitenoise', 'remix', '1', '1', '1', '1', 'delay', ...DELAYS[az]!, 'gain', '-12']);
  return path;
}

export interface CheckArrayRss {
  readonly shortMiB: number;
  readonly longMiB: number;
  readonly longMinutes: number;
  readonly longFileMiB: number;
  readonly lines: readonly string[];
}

export function benchCheckArrayRss(longMinutes = 30): CheckArrayRss {
  const dir = mkdtempSync(join(tmpdir(), 'bearline-bench-check-'));
  try {
    const shortTakes = [0, 90, 180].map((az) => `${az}=${take(dir, `t${az}.wav`, az, 5)}`);
    const peak = (long: string): number => {
      const r = spawnSync('/usr/bin/time', ['-f', '%M', process.execPath, BIN, 'check-array', '--array', 'square-10cm', ...shortTakes, `0=${long}`], { encoding: 'utf8' });
      if (r.status !== 0) throw new Error(`check-array failed: ${r.stderr}`);
      return Number(r.stderr.trim().split('\n').pop()) / 1024;
    };
    const shortLong = take(dir, 'long-short.wav', 0, 60);
    const shortMiB = peak(shortLong);
    rmSync(shortLong);
    const long = take(dir, 'long.wav', 0, longMinutes * 60);
    const longFileMiB = statSync(long).size / 1024 ** 2;
    const longMiB = peak(long);
    return {
      shortMiB,
      longMiB,
      longMinutes,
      longFileMiB,
      lines: [
        `peak RSS of bearline check-array (square-10cm, 3 takes of 5 s plus one long take, 4 ch 48 kHz 16-bit):`,
        `  long take of 1 min: ${shortMiB.toFixed(0)} MiB; of ${longMinutes} min (${longFileMiB.toFixed(0)} MiB file): ${longMiB.toFixed(0)} MiB; ratio ${(longMiB / shortMiB).toFixed(2)} (target: flat)`,
      ],
    };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  console.log(benchCheckArrayRss(Number(process.argv[2] ?? 30)).lines.join('\n'));
}

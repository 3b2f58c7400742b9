/**
 * Benchmark: read throughput of the WAV source on a 10-minute, 4-channel, 48 kHz, 16-bit
 * WAV that sox generates, in multiples of real time, against the floor of reading the
 * same bytes with no decoding (a ratio measured in the same run), and RSS at start and
 * end (the source reads in constant memory, so RSS should stay flat).
 *
 * Run alone: npx tsx test/bench/io-read.ts [minutes]
 * From the bench runner: import { benchIoRead } and await it.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { open } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { openWavSource } from '../../src/sources/wav-source.js';

export interface IoReadResult {
  readonly name: 'io-read';
  readonly audioSeconds: number;
  readonly fileBytes: number;
  /** Seconds of audio decoded per second of wall time. */
  readonly timesRealTime: number;
  /** Same, for reading the file's bytes with no decoding (the I/O floor). */
  readonly floorTimesRealTime: number;
  /** floor time / decode time: 1 means decoding costs nothing beyond the reads. */
  readonly ratioToFloor: number;
  readonly rssStartMiB: number;
  readonly rssPeakMiB: number;
  readonly rssEndMiB: number;
  readonly lines: readonly string[];
}

const MiB = 1024 * 1024;
const rss = (): number => process.memoryUsage.rss() / MiB;

export async function benchIoRead(opts: { minutes?: number; log?: (line: string) => void } = {}): Promise<IoReadResult> {
  const minutes = opts.minutes ?? 10;
  const log = opts.log ?? ((l: string) => process.stdout.write(l + '\n'));
  const dir = mkdtempSync(join(tmpdir(), 'bearline-bench-io-'));
  const file = join(dir, 'station.wav');
  try {
    // A wetland station's four mics: a frog chorus band, wind noise, a distant bird tone.
    execFileSync('sox', ['-R', '-n', '-r', '48000', '-c', '4', '-e', 'signed-integer', '-b', '16', file, 'synth', String(minutes * 60), 'sine', '900', 'pinknoise', 'sine', '3100', 'whitenoise', 'vol', '0.5']);
    const audioSeconds = minutes * 60;

    // The floor: the same positional reads of 4096-frame blocks, no decoding.
    const fh = await open(file, 'r');
    const { size: fileBytes } = await fh.stat();
    const buf = new Uint8Array(4096 * 8);
    let t = performance.now();
    for (let pos = 0; ; pos += buf.length) if ((await fh.read(buf, 0, buf.length, pos)).bytesRead < buf.length) break;
    const floorS = (performance.now() - t) / 1000;
    await fh.close();

    const rssStartMiB = rss();
    let rssPeakMiB = rssStartMiB;
    const src = await openWavSource(file);
    let frames = 0;
    let checksum = 0;
    t = performance.now();
    let k = 0;
    for await (const b of src.blocks()) {
      frames += b.length;
      checksum += b.channels[0]![0]!;
      if ((k++ & 255) === 0) rssPeakMiB = Math.max(rssPeakMiB, rss());
    }
    const readS = (performance.now() - t) / 1000;
    await src.close();
    const rssEndMiB = rss();
    if (frames !== audioSeconds * 48000 || !Number.isFinite(checksum)) throw new Error(`io-read bench: read ${frames} frames, expected ${audioSeconds * 48000}`);

    const result: IoReadResult = {
      name: 'io-read',
      audioSeconds,
      fileBytes,
      timesRealTime: audioSeconds / readS,
      floorTimesRealTime: audioSeconds / floorS,
      ratioToFloor: floorS / readS,
      rssStartMiB,
      rssPeakMiB,
      rssEndMiB,
      lines: [
        `io-read: ${minutes} min, 4 ch, 48 kHz, s16 WAV (${(fileBytes / MiB).toFixed(0)} MiB), blocks of 4096 frames`,
        `  WAV source: ${(audioSeconds / readS).toFixed(0)}x real time (${readS.toFixed(2)} s)`,
        `  plain reads, no decoding: ${(audioSeconds / floorS).toFixed(0)}x real time (${floorS.toFixed(2)} s); decode+read takes ${(readS / floorS).toFixed(2)}x the reads alone`,
        `  RSS: start ${rssStartMiB.toFixed(1)} MiB, peak ${rssPeakMiB.toFixed(1)} MiB, end ${rssEndMiB.toFixed(1)} MiB`,
      ],
    };
    for (const line of result.lines) log(line);
    return result;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const minutes = process.argv[2] ? Number(process.argv[2]) : undefined;
  await benchIoRead(minutes === undefined ? {} : { minutes });
}

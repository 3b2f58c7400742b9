/**
 * check-array reads each take through the scan's streaming WAV source (issue 17 item 4):
 * the same numbers as the in-memory measurement, RF64 takes (EBU Tech 3306: ds64 chunk, data
 * size 0xFFFFFFFF), a truncated take measured over what it holds with a warning, and a device
 * or FIFO refused at once instead of read without end. Truth: takes made by numpy
 * (make_takes.py: a 0.2 m pair, noise with fractional delays from the plane-wave formula of
 * interface.md). Its peak memory on a long take is measured in the bench (test/bench/check-array-rss.ts).
 */
import { execFileSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { expectUsageFailure, runCli } from '../helpers/cli.js';
import { tempDir } from '../helpers/temp-dir.js';
import { fitTakes, numpyTakes, takeArgs, type MadeTake } from './bench-helpers.js';
import { pairGeometry } from '../../src/geometry/array-geometry.js';

interface CheckJson {
  spacing_m: number;
  takes: { label: string; measured_tdoa_s: (number | null)[]; segments: number; segments_used: number }[];
}

/** The same WAV as RF64: 'RF64' header, a ds64 chunk with the 64-bit data size, 0xFFFFFFFF in the data chunk's size. */
function toRf64(wav: Buffer): Buffer {
  let at = 12;
  const chunks: Buffer[] = [];
  let dataSize = 0;
  while (at + 8 <= wav.length) {
    const id = wav.toString('ascii', at, at + 4);
    const size = wav.readUInt32LE(at + 4);
    const body = wav.subarray(at, at + 8 + size + (size & 1));
    if (id === 'data') {
      dataSize = size;
      const c = Buffer.from(body);
      c.writeUInt32LE(0xffffffff, 4);
      chunks.push(c);
    } else {
      chunks.push(body);
    }
    at += 8 + size + (size & 1);
  }
  const ds64 = Buffer.alloc(8 + 28);
  ds64.write('ds64', 0, 'ascii');
  ds64.writeUInt32LE(28, 4);
  ds64.writeBigUInt64LE(BigInt(dataSize), 16);
  const head = Buffer.alloc(12);
  head.write('RF64', 0, 'ascii');
  head.writeUInt32LE(0xffffffff, 4);
  head.write('WAVE', 8, 'ascii');
  return Buffer.concat([head, ds64, ...chunks]);
}

describe('check-array streams its takes', () => {
  const tmp = tempDir('check-stream');
  let takes: MadeTake[];
  beforeAll(() => {
    takes = numpyTakes(tmp.dir, 'pair', { rate: 16000, duration_s: 3, positions_m: [[-0.1, 0, 0], [0.1, 0, 0]], seed: 7 }, [{ az: -50 }, { az: -15 }, { az: 20 }, { az: 55 }]);
  });

  function check(args: string[]): { json: CheckJson; stderr: string } {
    const out = join(tmp.dir, `r${Math.random().toString(16).slice(2)}.json`);
    const r = runCli(['check-array', '--spacing', '0.2', ...args, '--json', out]);
    expect(r.status, r.stderr).toBe(0);
    return { json: JSON.parse(readFileSync(out, 'utf8')) as CheckJson, stderr: r.stderr };
  }
  const spacing = (j: CheckJson): number => j.spacing_m;

  it('gives the same per-take delays and spacing as the in-memory measurement, and the numpy spacing', () => {
    const { json } = check(takeArgs(takes));
    const inMemory = fitTakes(pairGeometry(0.2), takes);
    // numpy's truth: 0.2 m; the fit of clean noise takes is well inside a millimetre
    expect(Math.abs(spacing(json) - 0.2)).toBeLessThan(0.001);
    expect(spacing(json)).toBeCloseTo(inMemory.spacing!.value, 9);
    expect(json.takes.map((t) => t.segments)).toEqual(inMemory.takes.map((t) => t.segments));
    json.takes.forEach((t, i) => expect(t.measured_tdoa_s[0]).toBeCloseTo(inMemory.takes[i]!.measuredS[0]!, 9));
  });

  it('reads an RF64 take like its plain twin', () => {
    const rf = join(tmp.dir, 'rf64-take.wav');
    writeFileSync(rf, toRf64(readFileSync(takes[0]!.path)));
    const plain = check(takeArgs(takes)).json;
    const withRf = check([`${takes[0]!.az}=${rf}`, ...takeArgs(takes).slice(1)]).json;
    expect(spacing(withRf)).toBeCloseTo(spacing(plain), 12);
  });

  it('a truncated take is measured over what it holds, with a warning naming the file', () => {
    const cut = join(tmp.dir, 'cut-take.wav');
    const whole = readFileSync(takes[1]!.path);
    writeFileSync(cut, whole.subarray(0, Math.floor(whole.length / 2) + 1)); // half the audio and one odd byte
    const { json, stderr } = check([...takeArgs(takes).filter((_, i) => i !== 1), `${takes[1]!.az}=${cut}`]);
    expect(stderr).toMatch(/cut-take\.wav.*(truncated|shorter|ends)/i);
    const t = json.takes.find((x) => x.label.includes('cut-take'))!;
    // 1 s segments: a whole 3 s take has 3, the half take (just under 1.5 s) 1
    expect(json.takes.find((x) => !x.label.includes('cut-take'))!.segments).toBe(3);
    expect(t.segments).toBe(1);
    expect(t.segments_used).toBe(1);
    // its delay is the whole take's (the same noise from the same direction), within 2 us
    const wholeTake = check(takeArgs(takes)).json.takes[1]!;
    expect(Math.abs(t.measured_tdoa_s[0]! - wholeTake.measured_tdoa_s[0]!)).toBeLessThan(2e-6);
    expect(Math.abs(spacing(json) - 0.2)).toBeLessThan(0.001);
  });

  it('/dev/zero or a FIFO as a take is refused at once (exit 2), not read without end', () => {
    const fifo = join(tmp.dir, 'take.fifo');
    execFileSync('mkfifo', [fifo]);
    const started = Date.now();
    expectUsageFailure(runCli(['check-array', '--spacing', '0.2', '0=/dev/zero', ...takeArgs(takes).slice(1)], { timeoutMs: 20_000 }), /\/dev\/zero is not a regular file \(a device, FIFO or socket\)/);
    expectUsageFailure(runCli(['check-array', '--spacing', '0.2', `0=${fifo}`, ...takeArgs(takes).slice(1)], { timeoutMs: 20_000 }), /take\.fifo is not a regular file/);
    expectUsageFailure(runCli(['scan', fifo, '--spacing', '0.2'], { timeoutMs: 20_000 }), /take\.fifo is not a regular file/);
    expect(Date.now() - started).toBeLessThan(15_000);
  });
});

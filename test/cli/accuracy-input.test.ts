/**
 * `bearline accuracy` with nothing to score against: an empty truth file is bad input (exit 2,
 * one line naming the file), not "0.0 %" and success. The recording is a sox-made pair
 * (fractional delays: 10x rate, whole-sample delay, resample; references.md).
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { soxDelayedSignal } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

const tmp = tempDir('accuracy-input');

describe('bearline accuracy: bad truth', () => {
  it('an empty truth file: exit 2 naming it, nothing on stdout', () => {
    const wav = soxDelayedSignal({ out: join(tmp.dir, 'rec.wav'), delaysUp: [0, 100], durationS: 0.5 }, tmp.dir);
    writeFileSync(join(tmp.dir, 'rec.truth.jsonl'), '');
    writeFileSync(join(tmp.dir, 'rec.array.json'), JSON.stringify({ name: 'pair', mics: [{ channel: 0, position_m: [-0.1, 0, 0] }, { channel: 1, position_m: [0.1, 0, 0] }] }));
    const r = runCli(['accuracy', wav]);
    expect(r.status).toBe(2);
    expect(r.stdout).toBe('');
    expect(r.stderr).toMatch(/truth file .*rec\.truth\.jsonl holds no source/);
  });
});

describe('bearline accuracy --json', () => {
  it('has snake_case keys at every level, like every other output, and scores a sox-made source at its true azimuth', () => {
    const dir = join(tmp.dir, 'json');
    mkdirSync(dir, { recursive: true });
    // Noise delayed 100 samples at 480 kHz on channel 1: tdoa = +208.3 us, so for the 0.2 m pair
    // azimuth = -asin(c tdoa / D) (interface.md) = -20.97 deg at 343 m/s.
    const wav = soxDelayedSignal({ out: join(dir, 'rec.wav'), delaysUp: [0, 100], durationS: 2 }, dir);
    const az = (-Math.asin((343 * (100 / 480_000)) / 0.2) * 180) / Math.PI;
    const truth = Array.from({ length: 200 }, (_, i) => JSON.stringify({ time_s: i * 0.01, source: 'reed-frog', azimuth_deg: az, elevation_deg: 0 })).join('\n') + '\n';
    writeFileSync(join(dir, 'rec.truth.jsonl'), truth);
    writeFileSync(join(dir, 'rec.array.json'), JSON.stringify({ name: 'pair', mics: [{ channel: 0, position_m: [-0.1, 0, 0] }, { channel: 1, position_m: [0.1, 0, 0] }] }));
    const r = runCli(['accuracy', wav, '--json']);
    expect(r.status, r.stderr).toBe(0);
    const json = JSON.parse(r.stdout) as Record<string, unknown>;
    const keys: string[] = [];
    const walk = (v: unknown): void => {
      if (Array.isArray(v)) v.forEach(walk);
      else if (v && typeof v === 'object') for (const [k, x] of Object.entries(v)) (keys.push(k), walk(x));
    };
    walk(json);
    expect(keys.filter((k) => !/^[a-z0-9]+(_[a-z0-9]+)*$/.test(k))).toEqual([]);
    for (const k of ['voiced_hops', 'estimated_hops', 'median_deg', 'p90_deg', 'observation_s', 'sources', 'delays']) expect(keys).toContain(k);
    const within5 = (json.within as { deg: number; share: number }[]).find((w) => w.deg === 5)!;
    expect(within5.share).toBeGreaterThan(0.9);
    expect(json.median_deg as number).toBeLessThan(1);
  });
});

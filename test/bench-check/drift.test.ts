/**
 * Clock drift: 100 ppm between the channels of a pair over a 60 s take. The drift is made by
 * sox, independently of bearline: channel 1 is played 1.0001 times faster with sox's `speed`
 * effect (then `rate -v` back to 8 kHz), so its content arrives earlier by 100 us per second:
 * tdoa(t) = tdoa(0) - 100e-6 t, a drift of -100 ppm in bearline's sign (channel 1 runs ahead
 * of channel 0, as with a slow sample clock). The fixed delay of a source at 30 degrees is made
 * by sox too (whole samples at 10x the rate, then resampled: references.md).
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { sox } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

const RATE = 8000;
const UP = 10;
const DUR = 60;

describe('check-array measures clock drift (sox speed 1.0001 on one channel, 60 s at 8 kHz)', () => {
  const tmp = tempDir('bearline-check-drift-');
  const rec = join(tmp.dir, 'drift.wav');
  beforeAll(() => {
    const hi = join(tmp.dir, 'hi.wav');
    sox(['-R', '-n', '-r', String(RATE * UP), '-c', '1', '-b', '32', '-e', 'floating-point', hi, 'synth', String(DUR + 1), 'whitenoise', 'gain', '-12']);
    // Source at azimuth 30 on a 0.2 m pair: channel 1 (right) hears it earlier by 0.2 sin 30 / 343 s.
    const lead = Math.round(((0.2 * Math.sin(Math.PI / 6)) / 343) * RATE * UP);
    const ch0 = join(tmp.dir, 'ch0.wav');
    const ch1 = join(tmp.dir, 'ch1.wav');
    sox([hi, '-b', '32', '-e', 'floating-point', ch0, 'delay', `${lead}s`, 'rate', '-v', String(RATE), 'trim', '0', String(DUR)]);
    sox([hi, '-b', '32', '-e', 'floating-point', ch1, 'speed', '1.0001', 'rate', '-v', String(RATE), 'trim', '0', String(DUR)]);
    sox(['-M', ch0, ch1, '-b', '24', rec]);
  });
  afterAll(() => tmp.cleanup());

  it('finds -100 ppm within 10 ppm and fails it against the 20 ppm tolerance', () => {
    const json = join(tmp.dir, 'drift.json');
    const r = runCli(['check-array', '--spacing', '0.2', `30=${rec}`, '--json', json]);
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    const out = JSON.parse(readFileSync(json, 'utf8'));
    expect(out.drift_ppm[0]).toBe(0);
    expect(Math.abs(out.drift_ppm[1] - -100)).toBeLessThan(10);
    expect(out.checks.find((c: { item: string }) => c.item === 'drift ch1').status).toBe('fail');
    // One direction cannot tell spacing from offset: the report says so instead of guessing.
    expect(out.spacing_m).toBeNull();
    expect(out.notes.join(' ')).toMatch(/spacing not measured/);
    process.stdout.write(`drift test: measured ${out.drift_ppm[1]} +- ${out.drift_sigma_ppm[1]} ppm (made: -100 ppm)\n`);
  });
});

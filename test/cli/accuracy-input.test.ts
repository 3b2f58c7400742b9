/**
 * `bearline accuracy` with nothing to score against: an empty truth file is bad input (exit 2,
 * one line naming the file), not "0.0 %" and success. The recording is a sox-made pair
 * (fractional delays: 10x rate, whole-sample delay, resample; references.md).
 */
import { writeFileSync } from 'node:fs';
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

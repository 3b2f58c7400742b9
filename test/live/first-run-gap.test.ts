import { chmodSync, mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { isEvent, isGap, liveFixture } from './helpers.js';

// A recorder whose first run fails before it delivers any audio (issue 17: the gap record said
// "utc": "1970-01-01..." when the stream clock had no start). interface.md: live records carry
// utc (ISO 8601). The check is against the test's own wall clock around the run.
const fx = liveFixture('bearline-firstgap-', 'late-calls', -40, 3);

describe('a recorder that fails before its first audio', () => {
  it('the gap record starts at 0 with the wall-clock utc of the start and lasts the back-off; later records follow it', async () => {
    const bin = join(fx.dir, 'bin');
    mkdirSync(bin, { recursive: true });
    const runs = join(bin, 'runs');
    writeFileSync(
      join(bin, 'arecord'),
      `#!/bin/sh\nn=$(cat "${runs}" 2>/dev/null || echo 0); n=$((n+1)); echo $n > "${runs}"\n` +
        `if [ $n -le 1 ]; then echo "no such device" >&2; exit 1; fi\n` +
        // then 0.1 s chunks at about real time, as a sound card delivers them
        `i=0; while [ $i -lt 30 ]; do dd if="${fx.rec.raw}" bs=19200 skip=$i count=1 2>/dev/null; sleep 0.1; i=$((i+1)); done; exec sleep 60\n`,
    );
    chmodSync(join(bin, 'arecord'), 0o755);
    const before = Date.now();
    const run = fx.start(['listen', '--spacing', '0.2', '--recorder', 'arecord'], { env: { PATH: `${bin}:${process.env.PATH}` } });
    await run.waitFor((lines) => lines.some(isEvent), 'an event after the restart');
    run.child.kill('SIGTERM');
    expect(await run.exited).toBe(0);
    const after = Date.now();
    const gaps = run.lines.filter(isGap);
    expect(gaps).toHaveLength(1);
    const gap = gaps[0]!;
    expect(gap.gap).toMatch(/arecord exited with code 1 \(no such device\)/);
    expect(gap.start_s).toBe(0);
    // the first back-off is 0.5 s; the first chunk (0.1 s) is dated back to when its first sample was captured
    expect(gap.end_s as number).toBeGreaterThan(0.3);
    expect(gap.end_s as number).toBeLessThan(5);
    const utc = Date.parse(gap.utc as string);
    expect(utc).toBeGreaterThanOrEqual(before);
    expect(utc).toBeLessThanOrEqual(after);
    const first = run.lines.find(isEvent)!;
    expect(Date.parse(first.utc as string)).toBeGreaterThan(utc);
    expect(first.start_s as number).toBeGreaterThan(gap.end_s as number);
  });
});

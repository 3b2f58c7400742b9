import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { isEvent, isFrame, liveFixture, median, pairAzimuthDeg, RATE, type LiveRun } from './helpers.js';

// --read-every (src/sources/polled-reader.ts): live audio on stdin collected every so often
// instead of as each write arrives. The analysis must not see a difference: the same frame and
// event records (but their utc stamps) as a run reading every write. Calls at +35 deg from sox
// (test/live/helpers.ts); truth by interface.md's far-field formula azimuth = -asin(c tdoa / D).
const AZ = 35;
const fx = liveFixture('bearline-read-every-', 'read-every-calls', AZ, 3);

/** Feed the raw PCM in 20 ms writes at real-time pace (a sound card's periods), then close stdin. */
async function feedPaced(run: LiveRun, raw: Buffer): Promise<void> {
  const bytes = 0.02 * RATE * 2 * 2;
  const t0 = performance.now();
  for (let k = 0; k * bytes < raw.length; k++) {
    const wait = t0 + k * 20 - performance.now();
    if (wait > 0) await new Promise((r) => setTimeout(r, wait));
    run.child.stdin!.write(raw.subarray(k * bytes, (k + 1) * bytes));
  }
  run.child.stdin!.end();
}

const withoutUtc = (l: Record<string, unknown>): Record<string, unknown> => {
  const { utc: _utc, ...rest } = l;
  return rest;
};

describe('listen --stdin --read-every: the same records as reading every write', () => {
  it('--read-every 0.25 against --read-every 0, both fed 20 ms writes at real-time pace', async () => {
    const raw = readFileSync(fx.rec.raw);
    const runs: LiveRun[] = [];
    for (const every of ['0', '0.25']) {
      const run = fx.start(['listen', '--stdin', '--rate', String(RATE), '--channels', '2', '--spacing', '0.2', '--frames', '--read-every', every], { stdin: 'pipe' });
      await feedPaced(run, raw);
      expect(await run.exited).toBe(0);
      runs.push(run);
    }
    const [each, polled] = runs as [LiveRun, LiveRun];
    const frames = each.lines.filter(isFrame);
    // 3 s at hop 512: every hop of the stream has its record
    expect(frames.length).toBeGreaterThan(3 * (RATE / 512) - 4);
    expect(polled.lines.filter(isFrame).map(withoutUtc)).toEqual(frames.map(withoutUtc));
    expect(polled.lines.filter(isEvent).map(withoutUtc)).toEqual(each.lines.filter(isEvent).map(withoutUtc));
    // and they are right: the median confident delay gives the truth within 2 deg
    const tdoas = frames.filter((l) => (l.confidence as number) > 0.6).map((l) => (l.tdoa_s as number[])[0]!);
    expect(tdoas.length).toBeGreaterThan(20);
    expect(Math.abs(pairAzimuthDeg(median(tdoas)) - AZ)).toBeLessThan(2);
  }, 30_000);

  it('a bad --read-every is refused with exit 2', async () => {
    const run = fx.start(['listen', '--stdin', '--rate', String(RATE), '--channels', '2', '--spacing', '0.2', '--read-every', '2']);
    expect(await run.exited).toBe(2);
    expect(run.stderr()).toMatch(/--read-every <s>' argument '2' is invalid\. 2 is out of range; give a number from 0 to 1 s/);
  });
});

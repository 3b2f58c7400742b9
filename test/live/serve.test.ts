import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { probe, type FeedMessage } from '../helpers/ws-probe.js';
import { feedUrlOf, isEvent, liveFixture, median, standInRecorder } from './helpers.js';

// The feed protocol of src/feed/feed-protocol.ts (hello first, then frame and event messages)
// with listen and scan as the producers. Truth: a sox-made source at -50 deg for the 0.2 m
// pair (interface.md's far-field formula, applied by the test helper's delays).
const AZ = -50;
const fx = liveFixture('bearline-serve-', 'west-calls', AZ, 8);

function checkMessages(messages: FeedMessage[]): void {
  const hello = messages[0]!;
  expect(hello.type).toBe('hello');
  expect(hello.protocol).toBe(1);
  expect((hello.geometry as { mics: unknown[] }).mics).toHaveLength(2);
  expect((hello.settings as Record<string, unknown>).sample_rate_hz).toBe(48000);
  const frames = messages.filter((m) => m.type === 'frame');
  const sure = frames.filter((f) => (f.confidence as number) > 0.6);
  expect(sure.length).toBeGreaterThan(10);
  // Frame by frame a few hops near a call's edges stray; the median and 90 % of them must not.
  const errs = sure.map((f) => Math.abs((f.azimuth_deg as number) - AZ));
  expect(median(errs)).toBeLessThan(1.5);
  expect(errs.filter((e) => e < 4).length / errs.length).toBeGreaterThan(0.9);
  // The viewer's fields: one level per channel and the band votes.
  expect((frames[0]!.levels_dbfs as number[]).length).toBe(2);
  expect(Array.isArray(frames[0]!.band_votes)).toBe(true);
  const events = messages.filter((m) => m.type === 'event');
  expect(events.length).toBeGreaterThanOrEqual(2);
  for (const e of events) expect(Math.abs((e.azimuth_deg as number) - AZ)).toBeLessThan(3);
}

describe('--serve: a ws client gets hello, frames and events', () => {
  it('from bearline listen (stand-in recorder)', async () => {
    const bin = join(fx.dir, 'bin');
    standInRecorder(bin, 'arecord', fx.rec.raw, 8, ['exec sleep 60']);
    const run = fx.start(['listen', '--spacing', '0.2', '--recorder', 'arecord', '--serve', '--feed-port', '0', '--quiet'], { env: { PATH: `${bin}:${process.env.PATH}` } });
    await run.waitFor((_, err) => feedUrlOf(err) !== null, 'the feed URL on stderr');
    expect(run.stderr()).toMatch(/live view at http:\/\/127\.0\.0\.1:\d+\//);
    const client = probe(feedUrlOf(run.stderr())!);
    await client.waitFor((m) => m.filter((x) => x.type === 'event').length >= 2, 'two events', 20_000);
    run.child.kill('SIGTERM');
    expect(await run.exited).toBe(0);
    checkMessages(client.messages);
    // utc on live frames
    expect(Date.parse(client.ofType('frame')[0]!.utc as string)).not.toBeNaN();
    expect(run.lines).toHaveLength(0); // --quiet: nothing on stdout
  });

  it('from bearline scan FILE --serve --speed 20: paced replay, events on stdout too', async () => {
    const run = fx.start(['scan', fx.rec.wav, '--spacing', '0.2', '--serve', '--feed-port', '0', '--speed', '20']);
    await run.waitFor((_, err) => feedUrlOf(err) !== null, 'the feed URL on stderr');
    expect(run.stderr()).toMatch(/the replay starts when a viewer connects/);
    const client = probe(feedUrlOf(run.stderr())!);
    const arrivals: number[] = [];
    client.ws.on('message', () => arrivals.push(performance.now()));
    expect(await run.exited).toBe(0);
    await client.closed;
    checkMessages(client.messages);
    // 8 s of audio at 20x real time takes 0.4 s; unpaced it would pass in a small fraction of that.
    // A loose lower bound, only to see that pacing happens (the pace itself is tested with a fake clock).
    expect(arrivals[arrivals.length - 1]! - arrivals[0]!).toBeGreaterThan(250);
    expect(run.lines.filter(isEvent).length).toBe(client.ofType('event').length);
  });
});

import { Command } from 'commander';
import { describe, expect, it } from 'vitest';
import { addOptions, givenOptions } from '../../src/cli/options.js';
import { UsageError } from '../../src/util/errors.js';
import { DEFAULT_FEED_OPTIONS, feedOptionSpecs, isLoopbackHost, resolveFeedOptions, type FeedOptions } from '../../src/feed/feed-options.js';

function cli(args: string[]): Command {
  const cmd = new Command().exitOverride().configureOutput({ writeErr: () => undefined });
  addOptions(cmd, feedOptionSpecs);
  return cmd.parse(args, { from: 'user' });
}

describe('feed options', () => {
  it('defaults to loopback, no token, and sane bounds', () => {
    expect(resolveFeedOptions()).toEqual(DEFAULT_FEED_OPTIONS);
    expect(DEFAULT_FEED_OPTIONS.host).toBe('127.0.0.1');
    expect(DEFAULT_FEED_OPTIONS.token).toBeNull();
  });

  it.each([
    [{ port: 70000 }, /--feed-port: 70000 is out of range; give a whole number from 0 to 65535/],
    [{ port: 1.5 }, /--feed-port/],
    [{ host: 'no such host!' }, /--feed-host/],
    [{ token: 'short' }, /--feed-token: the value must be 8 to 256 characters/],
    [{ token: 'has spaces in it' }, /--feed-token/],
    [{ maxClients: 0 }, /--feed-max-clients: 0/],
    [{ queueBound: -3 }, /--feed-queue: -3/],
    [{ pingIntervalS: 0.01 }, /--feed-ping-interval: 0.01 is out of range; give a number from 0.1 to 3600 s/],
    [{ port: '8080' }, /--feed-port: '8080' is not a number/],
    [{ colour: 'green' }, /unknown option 'colour'/],
  ] as [Record<string, unknown>, RegExp][])('refuses %j with a UsageError naming the option', (bad, message) => {
    expect(() => resolveFeedOptions(bad as Partial<FeedOptions>)).toThrow(UsageError);
    expect(() => resolveFeedOptions(bad as Partial<FeedOptions>)).toThrow(message);
  });

  it('turns into commander options: one flag per option, parsed and validated', () => {
    expect(feedOptionSpecs.map((s) => s.key).sort()).toEqual(Object.keys(DEFAULT_FEED_OPTIONS).sort());
    const cmd = cli(['--feed-port', '0', '--feed-queue', '8', '--feed-token', 'bittern-boom-77', '--feed-ping-interval', '2.5']);
    expect(resolveFeedOptions(givenOptions(cmd, feedOptionSpecs))).toEqual({
      ...DEFAULT_FEED_OPTIONS,
      port: 0,
      queueBound: 8,
      token: 'bittern-boom-77',
      pingIntervalS: 2.5,
    });
    expect(resolveFeedOptions(givenOptions(cli([]), feedOptionSpecs))).toEqual(DEFAULT_FEED_OPTIONS);
    expect(() => cli(['--feed-port', 'eighty'])).toThrow(/--feed-port <n>.*'eighty' is not a number; give a whole number from 0 to 65535/);
    expect(() => cli(['--feed-max-clients', '0'])).toThrow(/--feed-max-clients/);
    expect(() => cli(['--feed-token', 'short'])).toThrow(/--feed-token <text>.*the value must be 8 to 256/);
    expect(() => cli(['--feed-host', 'bad host'])).toThrow(/--feed-host <address>/);
  });

  it('knows loopback addresses (RFC 1122 section 3.2.1.3: 127.0.0.0/8; RFC 4291: ::1)', () => {
    expect(isLoopbackHost('127.0.0.1')).toBe(true);
    expect(isLoopbackHost('127.3.2.1')).toBe(true);
    expect(isLoopbackHost('::1')).toBe(true);
    expect(isLoopbackHost('localhost')).toBe(true);
    expect(isLoopbackHost('0.0.0.0')).toBe(false);
    expect(isLoopbackHost('::')).toBe(false);
    expect(isLoopbackHost('192.168.1.20')).toBe(false);
  });
});

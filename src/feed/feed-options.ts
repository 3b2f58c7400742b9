/**
 * The user-settable options of the WebSocket feed: the options object and one spec per option
 * (src/options/option-spec.ts: type, default, range, help, command-line flag). Code that builds
 * a FeedOptions by hand goes through `resolveFeedOptions`.
 */
import { isIP } from 'node:net';
import { numberOption, resolveWithSpecs, textOption, type OptionSpec } from '../options/option-spec.js';
import { hostListProblem } from '../util/host-check.js';

export interface FeedOptions {
  /** TCP port of the page and the feed; 0 takes any free port. */
  readonly port: number;
  /** Address to listen on. Loopback unless the user asks for another. */
  readonly host: string;
  /** Access token required as ?token= on the page and the feed; null for none. */
  readonly token: string | null;
  /** Most viewers connected at once; more are refused with a close reason. */
  readonly maxClients: number;
  /** Most frame messages waiting for one slow viewer; older ones are dropped beyond it. */
  readonly queueBound: number;
  /** Seconds between pings; a viewer that has not answered the previous ping is cut off. */
  readonly pingIntervalS: number;
  /** More names the page and feed answer to (comma-separated), besides loopback and this machine's addresses (util/host-check.ts); null for none. */
  readonly allowHosts: string | null;
}

const TOKEN_MIN = 8;
const TOKEN_MAX = 256;
const TOKEN_PATTERN = /^[A-Za-z0-9._~-]+$/;

function hostProblem(h: string): string | null {
  return h === 'localhost' || isIP(h) !== 0 || /^[A-Za-z0-9.-]{1,253}$/.test(h) ? null : 'is not an IP address or a host name of this machine';
}

function tokenProblem(t: string): string | null {
  return t.length >= TOKEN_MIN && t.length <= TOKEN_MAX && TOKEN_PATTERN.test(t) ? null : `must be ${TOKEN_MIN} to ${TOKEN_MAX} characters of A-Z a-z 0-9 . _ ~ -`;
}

export const feedOptionSpecs: readonly OptionSpec<keyof FeedOptions>[] = [
  numberOption('port', 'feed-port', 'n', 8417, { min: 0, max: 65535, integer: true }, 'port of the live page and its WebSocket feed (0 = any free port)'),
  textOption('host', 'feed-host', 'address', '127.0.0.1', 'address to listen on; anything but loopback lets other machines watch (set --feed-token then)', { check: hostProblem }),
  textOption('token', 'feed-token', 'text', null, 'access token the page and feed require as ?token=...', { check: tokenProblem, secret: true }),
  numberOption('maxClients', 'feed-max-clients', 'n', 8, { min: 1, max: 256, integer: true }, 'most viewers at once; more are turned away'),
  numberOption('queueBound', 'feed-queue', 'n', 64, { min: 1, max: 100_000, integer: true }, 'most frames held for one slow viewer; the oldest are dropped beyond it (events never are)'),
  numberOption('pingIntervalS', 'feed-ping-interval', 's', 10, { min: 0.1, max: 3600, unit: 's' }, 'seconds between pings; a viewer that misses one is disconnected'),
  textOption('allowHosts', 'feed-allow-hosts', 'names', null, "more host names the page and feed may be opened by (comma-separated), besides loopback and this machine's addresses; other Host and Origin headers are refused", {
    defaultText: 'none',
    check: hostListProblem,
  }),
];

/** The defaults (a frozen copy). */
export const DEFAULT_FEED_OPTIONS: Readonly<FeedOptions> = Object.freeze(resolveFeedOptions());

/** The flag of an option without its argument, e.g. '--feed-port' (for messages). */
export function feedFlagName(key: keyof FeedOptions): string {
  return `--${feedOptionSpecs.find((s) => s.key === key)!.name}`;
}

/** Fill in defaults and validate. Throws a UsageError naming the option's flag; unknown keys are refused too. */
export function resolveFeedOptions(partial: Partial<FeedOptions> = {}): FeedOptions {
  return resolveWithSpecs<FeedOptions>(feedOptionSpecs, partial, 'feed');
}

/** True for addresses only this machine can reach (127.0.0.0/8, ::1, localhost). */
export function isLoopbackHost(host: string): boolean {
  if (host === 'localhost' || host === '::1' || host === '[::1]') return true;
  return isIP(host) === 4 && host.startsWith('127.');
}

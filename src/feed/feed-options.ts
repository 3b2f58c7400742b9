/**
 * The user-settable options of the WebSocket feed: one home for each (type, default,
 * validation, help text, command-line flag). The CLI turns `feedOptionSpecs` into commander
 * options; code that builds a FeedOptions by hand goes through `resolveFeedOptions`.
 */
import { isIP } from 'node:net';
import { InvalidArgumentError } from 'commander';
import { UsageError } from '../util/errors.js';

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
}

export const DEFAULT_FEED_OPTIONS: FeedOptions = {
  port: 8417,
  host: '127.0.0.1',
  token: null,
  maxClients: 8,
  queueBound: 64,
  pingIntervalS: 10,
};

/** One option as the command line shows it. */
export interface FeedOptionSpec<K extends keyof FeedOptions = keyof FeedOptions> {
  readonly key: K;
  /** commander flag, e.g. '--feed-port <n>'. */
  readonly flag: string;
  readonly help: string;
  readonly defaultValue: FeedOptions[K];
  /** Parses the raw command-line text; throws commander's InvalidArgumentError on bad text. */
  readonly parse: (raw: string) => FeedOptions[K];
}

const PORT_MAX = 65535;
const CLIENTS_MAX = 256;
const QUEUE_MAX = 100_000;
const PING_MIN_S = 0.1;
const PING_MAX_S = 3600;
const TOKEN_MIN = 8;
const TOKEN_MAX = 256;
const TOKEN_PATTERN = /^[A-Za-z0-9._~-]+$/;

/** The problem with a value, or null when it is fine (shared by the flag parsers and resolveFeedOptions). */
type Check<T> = (value: T) => string | null;

function wholeIn(lo: number, hi: number): Check<number> {
  return (n) => (Number.isInteger(n) && n >= lo && n <= hi ? null : `must be a whole number from ${lo} to ${hi}`);
}

const checks: { [K in keyof FeedOptions]: Check<FeedOptions[K]> } = {
  port: wholeIn(0, PORT_MAX),
  host: (h) =>
    h === 'localhost' || isIP(h) !== 0 || /^[A-Za-z0-9.-]{1,253}$/.test(h)
      ? null
      : 'must be an IP address or a host name of this machine, e.g. 127.0.0.1',
  token: (t) =>
    t === null || (t.length >= TOKEN_MIN && t.length <= TOKEN_MAX && TOKEN_PATTERN.test(t))
      ? null
      : `must be ${TOKEN_MIN} to ${TOKEN_MAX} characters of A-Z a-z 0-9 . _ ~ -`,
  maxClients: wholeIn(1, CLIENTS_MAX),
  queueBound: wholeIn(1, QUEUE_MAX),
  pingIntervalS: (s) =>
    Number.isFinite(s) && s >= PING_MIN_S && s <= PING_MAX_S ? null : `must be from ${PING_MIN_S} to ${PING_MAX_S} seconds`,
};

function numberFlag(key: 'port' | 'maxClients' | 'queueBound' | 'pingIntervalS'): (raw: string) => number {
  return (raw) => {
    const n = Number(raw);
    const problem = raw.trim() === '' ? 'is empty' : checks[key](n);
    if (problem) throw new InvalidArgumentError(`'${raw}' ${problem}.`);
    return n;
  };
}

function textFlag(key: 'host' | 'token'): (raw: string) => string {
  return (raw) => {
    const problem = checks[key](raw);
    if (problem) throw new InvalidArgumentError(`${key === 'token' ? 'the token' : `'${raw}'`} ${problem}.`);
    return raw;
  };
}

export const feedOptionSpecs: readonly FeedOptionSpec[] = [
  {
    key: 'port',
    flag: '--feed-port <n>',
    help: 'port of the live page and its WebSocket feed (0 = any free port)',
    defaultValue: DEFAULT_FEED_OPTIONS.port,
    parse: numberFlag('port'),
  },
  {
    key: 'host',
    flag: '--feed-host <address>',
    help: 'address to listen on; anything but loopback lets other machines watch (set --feed-token then)',
    defaultValue: DEFAULT_FEED_OPTIONS.host,
    parse: textFlag('host'),
  },
  {
    key: 'token',
    flag: '--feed-token <text>',
    help: 'access token the page and feed require as ?token=... (none by default)',
    defaultValue: DEFAULT_FEED_OPTIONS.token,
    parse: textFlag('token'),
  },
  {
    key: 'maxClients',
    flag: '--feed-max-clients <n>',
    help: 'most viewers at once; more are turned away',
    defaultValue: DEFAULT_FEED_OPTIONS.maxClients,
    parse: numberFlag('maxClients'),
  },
  {
    key: 'queueBound',
    flag: '--feed-queue <n>',
    help: 'most frames held for one slow viewer; the oldest are dropped beyond it (events never are)',
    defaultValue: DEFAULT_FEED_OPTIONS.queueBound,
    parse: numberFlag('queueBound'),
  },
  {
    key: 'pingIntervalS',
    flag: '--feed-ping-interval <s>',
    help: 'seconds between pings; a viewer that misses one is disconnected',
    defaultValue: DEFAULT_FEED_OPTIONS.pingIntervalS,
    parse: numberFlag('pingIntervalS'),
  },
];

/** The flag of an option without its argument, e.g. '--feed-port' (for messages). */
export function feedFlagName(key: keyof FeedOptions): string {
  const spec = feedOptionSpecs.find((s) => s.key === key);
  return spec ? spec.flag.split(' ')[0] : key;
}

/**
 * Fill in defaults and validate. Throws a UsageError naming the option's flag when a
 * value is bad; unknown keys are refused too.
 */
export function resolveFeedOptions(partial: Partial<Record<keyof FeedOptions, unknown>> = {}): FeedOptions {
  for (const key of Object.keys(partial)) {
    if (!(key in DEFAULT_FEED_OPTIONS)) {
      throw new UsageError(`unknown feed option '${key}': known ones are ${Object.keys(DEFAULT_FEED_OPTIONS).join(', ')}`);
    }
  }
  const pick = <K extends keyof FeedOptions>(key: K, isType: (v: unknown) => v is FeedOptions[K]): FeedOptions[K] => {
    const raw = partial[key];
    if (raw === undefined) return DEFAULT_FEED_OPTIONS[key];
    const problem = isType(raw) ? checks[key](raw) : 'has the wrong type';
    if (problem !== null || !isType(raw)) {
      throw new UsageError(`${feedFlagName(key)} ${JSON.stringify(raw)} ${problem ?? 'is invalid'}: see bearline --help`);
    }
    return raw;
  };
  const isNum = (v: unknown): v is number => typeof v === 'number';
  const isStr = (v: unknown): v is string => typeof v === 'string';
  const isToken = (v: unknown): v is string | null => v === null || typeof v === 'string';
  return {
    port: pick('port', isNum),
    host: pick('host', isStr),
    token: pick('token', isToken),
    maxClients: pick('maxClients', isNum),
    queueBound: pick('queueBound', isNum),
    pingIntervalS: pick('pingIntervalS', isNum),
  };
}

/** commander's attribute name for a flag: '--feed-max-clients <n>' -> 'feedMaxClients'. */
export function attributeNameOf(flag: string): string {
  return flag
    .split(' ')[0]
    .replace(/^--/, '')
    .replace(/-([a-z])/g, (_, c: string) => c.toUpperCase());
}

/** The feed options from commander's parsed values (options registered from feedOptionSpecs). */
export function feedOptionsFromCli(values: Readonly<Record<string, unknown>>): FeedOptions {
  const partial: Partial<Record<keyof FeedOptions, unknown>> = {};
  for (const spec of feedOptionSpecs) {
    const v = values[attributeNameOf(spec.flag)];
    if (v !== undefined) partial[spec.key] = v;
  }
  return resolveFeedOptions(partial);
}

/** True for addresses only this machine can reach (127.0.0.0/8, ::1, localhost). */
export function isLoopbackHost(host: string): boolean {
  if (host === 'localhost' || host === '::1' || host === '[::1]') return true;
  return isIP(host) === 4 && host.startsWith('127.');
}

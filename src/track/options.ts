/**
 * Every setting of the tracker and the event cutter, in one place: the options object with
 * its defaults, a spec per option (flag, help, unit, parser) that the CLI turns into
 * commander options, validation, and the "tracker" part of a run profile
 * (configs/profiles/*.json).
 */
import { UsageError } from '../util/errors.js';
import { isArrayMirror, type ArrayMirror } from '../geometry/array-mirror.js';

export interface TrackerOptions {
  /**
   * The array's mirror (src/geometry/array-mirror.ts), null for a solid array. Set from the
   * geometry, not a flag. When it flips azimuth (a pair, a line, an upright planar array) the
   * tracker works on the azimuth relative to the reported half circle, [-90, 90] (the angle to
   * the mirror's axis, less 90), where a source moving past the axis comes back as its mirror.
   */
  mirror: ArrayMirror | null;
  /** Standard deviation of a candidate's azimuth at hop confidence x score 1, degrees (its variance grows as 1 / (confidence x score)). */
  bearingNoiseDeg: number;
  /** How far a track's angular rate may wander in one second (1 sigma), deg/s. */
  rateWanderDegS: number;
  /** Largest angular rate a track may hold, deg/s. */
  maxRateDegS: number;
  /** Time constant with which a track's angular rate relaxes to zero, seconds. */
  rateMemoryS: number;
  /** Rate uncertainty (1 sigma) of a new track, deg/s. */
  initialRateDegS: number;
  /** Cap on a coasting track's direction uncertainty (1 sigma), degrees. */
  maxUncertaintyDeg: number;
  /** Gate: a candidate may join a track within this many standard deviations of its prediction. */
  gateSigma: number;
  /** A candidate feeds no track (and starts none) when hop confidence x its score is lower. */
  minConfidence: number;
  /** Lowest hop confidence x candidate score that may start a new (tentative) track. */
  birthConfidence: number;
  /** A tentative track is confirmed after this many supported hops (M of N) ... */
  confirmHits: number;
  /** ... within this many hops since its birth (N). */
  confirmWindow: number;
  /** A confirmed track dies after this long without support, seconds. */
  trackTimeoutS: number;
  /** Most tracks alive at once (tentative ones included), at most 16. */
  maxTracks: number;
  /** Candidates considered per hop, best first, at most 8. */
  maxCandidates: number;
  /** An event starts when the hop's SNR over the noise floor reaches this, dB (or an onset arrives above the leave SNR). */
  eventEnterSnrDb: number;
  /** An event continues while the hop's SNR stays at or above this, dB. */
  eventLeaveSnrDb: number;
  /** An event starts when confidence x candidate score reaches this. */
  eventEnterConfidence: number;
  /** An event continues while confidence x candidate score stays at or above this. */
  eventLeaveConfidence: number;
  /** Onset strength that starts an event (above the leave level) or splits one after a gap. */
  onsetThreshold: number;
  /** Shortest event reported, seconds. */
  minEventS: number;
  /** Longest gap bridged inside one event, seconds; also the delay before an event is emitted. */
  maxGapS: number;
}

/** Settings as given: typed (from code) or parsed JSON (from a profile); resolveTrackerOptions checks both. */
export type TrackerSettings = Partial<TrackerOptions> | Readonly<Record<string, unknown>>;

export type NumericOptionKey = { [K in keyof TrackerOptions]: TrackerOptions[K] extends number ? K : never }[keyof TrackerOptions];

export interface NumericOptionSpec {
  readonly key: NumericOptionKey;
  readonly kind: 'number';
  /** commander flag with its value placeholder, e.g. "--gate <sigma>". */
  readonly flag: string;
  readonly help: string;
  readonly unit: string;
  readonly default: number;
  readonly min: number;
  readonly max: number;
  /** min itself is not allowed (the value must be greater). */
  readonly minExclusive: boolean;
  readonly integer: boolean;
  /** Parse and check a command-line value; a bad one throws a UsageError naming the flag. */
  parse(raw: string): number;
}

export interface GeometryOptionSpec {
  readonly key: 'mirror';
  readonly kind: 'geometry';
  /** null: not a command-line option (the caller derives it from the geometry). */
  readonly flag: null;
  readonly help: string;
  readonly unit: '';
  readonly default: null;
}

export type TrackerOptionSpec = NumericOptionSpec | GeometryOptionSpec;

/** The largest assignment problem solved per hop (global nearest neighbour, exact). */
export const TRACK_LIMIT = 16;
export const CANDIDATE_LIMIT = 8;

interface Range {
  min: number;
  max: number;
  minExclusive?: boolean;
  integer?: boolean;
}

function numberSpec(key: NumericOptionKey, flag: string, unit: string, def: number, range: Range, help: string): NumericOptionSpec {
  const spec: NumericOptionSpec = {
    key,
    kind: 'number',
    flag,
    help,
    unit,
    default: def,
    min: range.min,
    max: range.max,
    minExclusive: range.minExclusive ?? false,
    integer: range.integer ?? false,
    parse(raw: string): number {
      const n = Number(raw);
      const name = flag.split(' ')[0]!;
      if (raw.trim() === '' || !Number.isFinite(n)) throw new UsageError(`${name}: '${raw}' is not a number; ${describeRange(spec)}.`);
      return checkNumber(spec, n, name);
    },
  };
  return spec;
}

function describeRange(spec: NumericOptionSpec): string {
  const unit = spec.unit === '' ? '' : ` ${spec.unit}`;
  const kind = spec.integer ? 'a whole number' : 'a number';
  const low = spec.minExclusive ? `above ${spec.min}` : `from ${spec.min}`;
  const high = Number.isFinite(spec.max) ? ` to ${spec.max}` : ' up';
  return `give ${kind} ${low}${high}${unit}`;
}

function checkNumber(spec: NumericOptionSpec, n: number, name: string): number {
  const tooLow = spec.minExclusive ? n <= spec.min : n < spec.min;
  if (!Number.isFinite(n) || tooLow || n > spec.max || (spec.integer && !Number.isInteger(n))) {
    throw new UsageError(`${name}: ${n} is out of range; ${describeRange(spec)}.`);
  }
  return n;
}

export const trackerOptionSpecs: readonly TrackerOptionSpec[] = [
  {
    key: 'mirror',
    kind: 'geometry',
    flag: null,
    unit: '',
    default: null,
    help: 'the array\'s mirror (a pair or line cannot tell an azimuth from its mirror image across its axis); set from the geometry',
  },
  numberSpec('bearingNoiseDeg', '--bearing-noise <deg>', 'deg', 3, { min: 0, max: 45, minExclusive: true },
    'spread (1 sigma) of a candidate azimuth at confidence x score 1; less confident candidates count as noisier'),
  numberSpec('rateWanderDegS', '--rate-wander <deg/s>', 'deg/s', 3, { min: 0, max: 1000 },
    'how much a source\'s angular rate may change within one second (1 sigma)'),
  numberSpec('maxRateDegS', '--max-rate <deg/s>', 'deg/s', 90, { min: 0, max: 3600 },
    'fastest angular rate a track may hold'),
  numberSpec('rateMemoryS', '--rate-memory <s>', 's', 10, { min: 0, max: 3600, minExclusive: true },
    'time constant with which a track forgets its angular rate (short: static sources)'),
  numberSpec('initialRateDegS', '--initial-rate <deg/s>', 'deg/s', 20, { min: 0, max: 3600 },
    'rate uncertainty (1 sigma) of a newly born track'),
  numberSpec('maxUncertaintyDeg', '--max-uncertainty <deg>', 'deg', 8, { min: 0, max: 90, minExclusive: true },
    'cap on the direction uncertainty (1 sigma) of a track coasting through silence'),
  numberSpec('gateSigma', '--gate <sigma>', 'sigma', 3.5, { min: 1, max: 10 },
    'a candidate may join a track only within this many standard deviations of its prediction'),
  numberSpec('minConfidence', '--track-confidence <c>', '', 0.2, { min: 0, max: 1 },
    'a candidate feeds a track only when hop confidence x its score reaches this'),
  numberSpec('birthConfidence', '--birth-confidence <c>', '', 0.4, { min: 0, max: 1 },
    'lowest hop confidence x candidate score that may start a new track'),
  numberSpec('confirmHits', '--confirm-hits <m>', 'hops', 3, { min: 1, max: 32, integer: true },
    'a new track is confirmed after M supported hops ...'),
  numberSpec('confirmWindow', '--confirm-window <n>', 'hops', 5, { min: 1, max: 32, integer: true },
    '... within its first N hops, else dropped'),
  numberSpec('trackTimeoutS', '--track-timeout <s>', 's', 10, { min: 0, max: 86400, minExclusive: true },
    'a track dies after this long without support; a source calling again later gets a new id'),
  numberSpec('maxTracks', '--max-tracks <n>', 'tracks', 8, { min: 1, max: TRACK_LIMIT, integer: true },
    `most tracks alive at once (new and confirmed), at most ${TRACK_LIMIT}`),
  numberSpec('maxCandidates', '--max-candidates <n>', 'per hop', 4, { min: 1, max: CANDIDATE_LIMIT, integer: true },
    `direction candidates considered per hop, best first, at most ${CANDIDATE_LIMIT}`),
  numberSpec('eventEnterSnrDb', '--event-enter-snr <dB>', 'dB', 10, { min: 0, max: 60 },
    'SNR over the noise floor at which an event starts'),
  numberSpec('eventLeaveSnrDb', '--event-leave-snr <dB>', 'dB', 5, { min: 0, max: 60 },
    'SNR below which an event counts as paused (at most the enter SNR)'),
  numberSpec('eventEnterConfidence', '--event-enter-confidence <c>', '', 0.5, { min: 0, max: 1 },
    'confidence x candidate score at which an event starts'),
  numberSpec('eventLeaveConfidence', '--event-leave-confidence <c>', '', 0.3, { min: 0, max: 1 },
    'confidence x candidate score below which an event counts as paused (at most the enter value)'),
  numberSpec('onsetThreshold', '--onset-threshold <o>', '', 0.5, { min: 0, max: 1 },
    'onset strength that starts an event above the leave level, or splits one after a pause'),
  numberSpec('minEventS', '--min-event <s>', 's', 0.04, { min: 0, max: 3600 },
    'shortest event reported'),
  numberSpec('maxGapS', '--max-gap <s>', 's', 0.12, { min: 0, max: 60 },
    'longest pause bridged inside one event; an event is emitted this long after its call ends'),
];

function buildDefaults(): TrackerOptions {
  const out: Record<string, number | ArrayMirror | null> = {};
  for (const spec of trackerOptionSpecs) out[spec.key] = spec.default;
  return out as unknown as TrackerOptions;
}

/** The defaults (a frozen copy; spread it to change fields). */
export const defaultTrackerOptions: Readonly<TrackerOptions> = Object.freeze(buildDefaults());

function flagName(spec: TrackerOptionSpec): string {
  return spec.flag === null ? spec.key : `${spec.key} (${spec.flag.split(' ')[0]})`;
}

/**
 * Fill in defaults and check every value; `undefined` means "use the default". A wrong type,
 * an out-of-range value, an unknown name or an inconsistent pair throws a UsageError that
 * names the option. `where` prefixes the message (e.g. the profile file).
 */
export function resolveTrackerOptions(partial: TrackerSettings = {}, where = 'tracker'): TrackerOptions {
  const given = partial as Readonly<Record<string, unknown>>;
  const known = new Set<string>(trackerOptionSpecs.map((s) => s.key));
  for (const name of Object.keys(given)) {
    if (!known.has(name)) {
      throw new UsageError(`${where}: unknown option '${name}'; known options are ${[...known].join(', ')}.`);
    }
  }
  const out: Record<string, number | ArrayMirror | null> = {};
  for (const spec of trackerOptionSpecs) {
    const value = given[spec.key];
    if (value === undefined) {
      out[spec.key] = spec.default;
    } else if (spec.kind === 'geometry') {
      if (value !== null && !isArrayMirror(value)) {
        throw new UsageError(`${where}: option ${flagName(spec)} is derived from the array geometry (null or the description arrayMirror gives), got ${JSON.stringify(value)}; leave it out.`);
      }
      out[spec.key] = value;
    } else {
      if (typeof value !== 'number') throw new UsageError(`${where}: option ${flagName(spec)} must be a number, got ${JSON.stringify(value)}; ${describeRange(spec)}.`);
      out[spec.key] = checkNumber(spec, value, `${where}: option ${flagName(spec)}`);
    }
  }
  const opts = out as unknown as TrackerOptions;
  if (opts.eventLeaveSnrDb > opts.eventEnterSnrDb) {
    throw new UsageError(`${where}: option eventLeaveSnrDb (--event-leave-snr) is ${opts.eventLeaveSnrDb} dB, above eventEnterSnrDb (--event-enter-snr) ${opts.eventEnterSnrDb}; the leave SNR must not exceed the enter SNR.`);
  }
  if (opts.eventLeaveConfidence > opts.eventEnterConfidence) {
    throw new UsageError(`${where}: option eventLeaveConfidence (--event-leave-confidence) is ${opts.eventLeaveConfidence}, above eventEnterConfidence (--event-enter-confidence) ${opts.eventEnterConfidence}; the leave value must not exceed the enter value.`);
  }
  if (opts.confirmHits > opts.confirmWindow) {
    throw new UsageError(`${where}: option confirmHits (--confirm-hits) is ${opts.confirmHits}, more than confirmWindow (--confirm-window) ${opts.confirmWindow}; M must not exceed N.`);
  }
  if (opts.trackTimeoutS < opts.maxGapS) {
    throw new UsageError(`${where}: option trackTimeoutS (--track-timeout) is ${opts.trackTimeoutS} s, shorter than maxGapS (--max-gap) ${opts.maxGapS} s; a track must outlive the gaps its events bridge.`);
  }
  return opts;
}

/**
 * The tracker settings of a parsed run profile (configs/profiles/*.json): the object under
 * its "tracker" key (absent: no settings). `where` names the file in error messages. The
 * result still needs resolveTrackerOptions (after any command-line overrides are merged).
 */
export function trackerSettingsFromProfile(profile: unknown, where: string): Readonly<Record<string, unknown>> {
  if (typeof profile !== 'object' || profile === null || Array.isArray(profile)) {
    throw new UsageError(`${where}: a profile must be a JSON object with a "tracker" object inside.`);
  }
  const tracker = (profile as Readonly<Record<string, unknown>>)['tracker'];
  if (tracker === undefined) return {};
  if (typeof tracker !== 'object' || tracker === null || Array.isArray(tracker)) {
    throw new UsageError(`${where}: "tracker" must be an object of tracker options, e.g. {"gateSigma": 3}.`);
  }
  const settings = tracker as Readonly<Record<string, unknown>>;
  resolveTrackerOptions(settings, `${where} "tracker"`);
  return settings;
}

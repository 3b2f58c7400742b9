/**
 * Every setting of the tracker and the event cutter, in one place: the options object with
 * its defaults, a spec per option (src/options/option-spec.ts: flag, unit, range, help) from
 * which come the command-line options, the "tracker" section of a run profile
 * (configs/profiles/*.json) and the README's table, and validation.
 */
import { ANALYSIS_DEFAULTS, CANDIDATE_LIMIT } from '../analysis/analysis-options.js';
import { isArrayMirror, type ArrayMirror } from '../geometry/array-mirror.js';
import { numberOption, resolveWithSpecs, specDefaults, type NumberSpec } from '../options/option-spec.js';
import { UsageError } from '../util/errors.js';

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
  /** A confirmed track dies after this long without a support that moved it, seconds. */
  trackTimeoutS: number;
  /** ... a settled (static) track after this long, seconds (at least trackTimeoutS). */
  staticTimeoutS: number;
  /** Most tracks alive at once (tentative ones included), at most 16. */
  maxTracks: number;
  /**
   * Candidates considered per hop, best first, at most 8. Set from the analysis (its
   * --max-sources: a hop hands the tracker no more), not a flag.
   */
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

/** Settings as given (from code, or read from the command line and a profile); resolveTrackerOptions checks them. */
export type TrackerSettings = Partial<TrackerOptions>;

type NumericKey = { [K in keyof TrackerOptions]: TrackerOptions[K] extends number ? K : never }[keyof TrackerOptions];

/** The fields set by the program, not the user: the mirror (from the geometry) and the candidates per hop (from the analysis). */
const FROM_THE_PROGRAM = ['mirror', 'maxCandidates'] as const;

/** The largest assignment problem solved per hop (global nearest neighbour, exact). */
export const TRACK_LIMIT = 16;
export { CANDIDATE_LIMIT };

interface Range {
  min: number;
  max: number;
  minExclusive?: boolean;
  integer?: boolean;
}

/** One tracker option: its flag ('--gate <sigma>'), unit, default, range and help. */
function numberSpec(key: NumericKey, flag: string, unit: string, def: number, range: Range, help: string): NumberSpec<NumericKey> {
  const [dashed, arg] = flag.split(' ') as [string, string];
  return numberOption(key, dashed.slice(2), arg.slice(1, -1), def, { ...range, unit }, help);
}

/** The user's tracker options: command line, profile section "tracker", README table. */
export const trackerOptionSpecs: readonly NumberSpec<NumericKey>[] = [
  numberSpec('bearingNoiseDeg', '--bearing-noise <deg>', 'deg', 3, { min: 0, max: 45, minExclusive: true },
    'spread (1 sigma) of a candidate azimuth at confidence x score 1; less confident candidates count as noisier'),
  numberSpec('rateWanderDegS', '--rate-wander <deg/s>', 'deg/s', 3, { min: 0, max: 1000 },
    'how much a source\'s angular rate may change within one second (1 sigma)'),
  // 120 deg/s: a bird flying 10 m/s past at 5 m peaks at 115 deg/s (v / d rad/s, common practice,
  // no source). Motion matrix, ten draws (sources >= 80 % complete summed / id switches / tracks
  // holding two): 90 deg/s 846 / 54 / 13, 120 deg/s 849 / 46 / 13 (held out 9999 11 -> 9
  // switches, 2 -> 1 tracks holding two; 2718, 4040 the same); a caller rendered with numpy at a
  // constant 90 deg/s keeps one track only above 90 (test/accuracy/numpy-mover.test.ts). The
  // accuracy matrix gives the same directions; events per call change in 4 of 198 cells.
  numberSpec('maxRateDegS', '--max-rate <deg/s>', 'deg/s', 120, { min: 0, max: 3600 },
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
    'a track dies after this long without a reading that moved it; a source calling again later gets a new id'),
  numberSpec('staticTimeoutS', '--static-timeout <s>', 's', 300, { min: 0, max: 86400, minExclusive: true },
    'the same for a track that has stayed at one bearing (a chorus, a perched caller): it keeps its id through pauses this long (at least --track-timeout)'),
  numberSpec('maxTracks', '--max-tracks <n>', 'tracks', 8, { min: 1, max: TRACK_LIMIT, integer: true },
    `most tracks alive at once (new and confirmed), at most ${TRACK_LIMIT}`),
  numberSpec('eventEnterSnrDb', '--event-enter-snr <dB>', 'dB', 10, { min: 0, max: 60 },
    'SNR over the noise floor at which an event starts'),
  numberSpec('eventLeaveSnrDb', '--event-leave-snr <dB>', 'dB', 5, { min: 0, max: 60 },
    'SNR below which an event counts as paused (at most the enter SNR); hops below it neither start nor move a track'),
  numberSpec('eventEnterConfidence', '--event-enter-confidence <c>', '', 0.5, { min: 0, max: 1 },
    'confidence x candidate score at which an event starts; a candidate below it does not move its track'),
  numberSpec('eventLeaveConfidence', '--event-leave-confidence <c>', '', 0.3, { min: 0, max: 1 },
    'confidence x candidate score below which an event counts as paused (at most the enter value)'),
  numberSpec('onsetThreshold', '--onset-threshold <o>', '', 0.5, { min: 0, max: 1 },
    'onset strength that starts an event above the leave level, or splits one after a pause'),
  numberSpec('minEventS', '--min-event <s>', 's', 0.04, { min: 0, max: 3600 },
    'shortest event reported'),
  numberSpec('maxGapS', '--max-gap <s>', 's', 0.12, { min: 0, max: 60 },
    'longest pause bridged inside one event; an event is emitted this long after its call ends'),
];

/** The defaults (a frozen copy; spread it to change fields). */
export const defaultTrackerOptions: Readonly<TrackerOptions> = Object.freeze({
  ...(specDefaults(trackerOptionSpecs) as Record<NumericKey, number>),
  mirror: null,
  maxCandidates: ANALYSIS_DEFAULTS.maxCandidates,
});

/**
 * Fill in defaults and check every value; `undefined` means "use the default". A wrong type,
 * an out-of-range value, an unknown name or an inconsistent pair throws a UsageError that
 * names the option.
 */
export function resolveTrackerOptions(partial: TrackerSettings = {}, where = 'tracker'): TrackerOptions {
  const opts: TrackerOptions = { ...defaultTrackerOptions, ...resolveWithSpecs<TrackerOptions>(trackerOptionSpecs, partial, where, FROM_THE_PROGRAM) };
  if (opts.mirror !== null && !isArrayMirror(opts.mirror)) {
    throw new UsageError(`${where}: mirror is derived from the array geometry (null or the description arrayMirror gives), got ${JSON.stringify(opts.mirror)}; leave it out.`);
  }
  if (!(Number.isInteger(opts.maxCandidates) && opts.maxCandidates >= 1 && opts.maxCandidates <= CANDIDATE_LIMIT)) {
    throw new UsageError(`${where}: maxCandidates ${opts.maxCandidates} must be a whole number from 1 to ${CANDIDATE_LIMIT} (the analysis's --max-sources)`);
  }
  const pair = (a: string, av: number, b: string, bv: number, rule: string): never => {
    throw new UsageError(`${where}: --${a} ${av} against --${b} ${bv}: ${rule}.`);
  };
  if (opts.eventLeaveSnrDb > opts.eventEnterSnrDb) pair('event-leave-snr', opts.eventLeaveSnrDb, 'event-enter-snr', opts.eventEnterSnrDb, 'the leave SNR must not exceed the enter SNR');
  if (opts.eventLeaveConfidence > opts.eventEnterConfidence) pair('event-leave-confidence', opts.eventLeaveConfidence, 'event-enter-confidence', opts.eventEnterConfidence, 'the leave value must not exceed the enter value');
  if (opts.confirmHits > opts.confirmWindow) pair('confirm-hits', opts.confirmHits, 'confirm-window', opts.confirmWindow, 'M must not exceed N');
  if (opts.trackTimeoutS < opts.maxGapS) pair('track-timeout', opts.trackTimeoutS, 'max-gap', opts.maxGapS, 'a track must outlive the gaps its events bridge');
  return opts;
}

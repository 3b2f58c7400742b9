/**
 * The user-settable numbers of live locating (`bearline locate --mqtt`) that the pure core
 * (live-locator.ts) uses: how long a call waits for late stations, how far back late and
 * backfilled events are matched, and the bounds on what is held. One spec per option.
 */
import { flagOption, numberOption, resolveWithSpecs, type OptionSpec } from '../options/option-spec.js';

export interface LiveLocateOptions {
  /**
   * Longest time (seconds) between a call's onset at a station and its event reaching us
   * (the call's length, the event cutter's wait, the network). A call waits this long plus
   * --match-slack and the sound's travel time between the stations for late stations.
   */
  eventLatencyS: number;
  /** Publish a revised fix (same id) when a late event joins a call whose fix was already published. */
  revise: boolean;
  /** How far back (seconds before now) late and backfilled events are still matched. */
  backfillWindowS: number;
  /** Most events waiting for a decision; beyond it the oldest are decided early. */
  maxPending: number;
  /** Most decided calls and lone events kept for late and backfilled events. */
  maxHistory: number;
}

export const DEFAULT_LIVE_LOCATE_OPTIONS: Readonly<LiveLocateOptions> = Object.freeze({
  eventLatencyS: 3,
  revise: false,
  backfillWindowS: 900,
  maxPending: 20_000,
  maxHistory: 100_000,
});

const D = DEFAULT_LIVE_LOCATE_OPTIONS;

export const liveLocateOptionSpecs: readonly OptionSpec<keyof LiveLocateOptions>[] = [
  numberOption('eventLatencyS', 'event-latency', 's', D.eventLatencyS, { min: 0, max: 3600, unit: 's' }, 'longest delay from a call onset to its event arriving; a fix waits this plus --match-slack for late stations'),
  flagOption('revise', 'revise', D.revise, 'publish a revised fix (same id) when a late event joins a call already published'),
  numberOption('backfillWindowS', 'backfill-window', 's', D.backfillWindowS, { min: 0, max: 86_400, unit: 's' }, 'how far back late and backfilled events are still matched'),
  numberOption('maxPending', 'max-pending', 'n', D.maxPending, { min: 10, max: 10_000_000, integer: true }, 'most events waiting for a decision (the oldest are decided early beyond it)'),
  numberOption('maxHistory', 'max-history', 'n', D.maxHistory, { min: 10, max: 10_000_000, integer: true }, 'most decided calls kept for late and backfilled events'),
];

export function resolveLiveLocateOptions(partial: Partial<LiveLocateOptions> = {}): LiveLocateOptions {
  return resolveWithSpecs<LiveLocateOptions>(liveLocateOptionSpecs, partial, 'locate');
}

/**
 * The I/O settings of live locating (`bearline locate --mqtt`): the broker, the topic root,
 * the status line and how long a lost broker is waited for. One spec per option; the matching
 * core's own live settings are in src/locate/live-options.ts.
 */
import { numberOption, resolveWithSpecs, textOption, type OptionSpec } from '../options/option-spec.js';
import { brokerUrlProblem } from '../sinks/mqtt-options.js';
import { DEFAULT_TOPIC_ROOT, topicRootProblem } from '../station/station-topics.js';

export interface FleetOptions {
  /** Broker URL; null = the file mode. */
  mqtt: string | null;
  /** Topic root of the stations (ROOT/STATION/events) and of the fixes (ROOT/fixes). */
  topicRoot: string;
  /** Seconds between status lines on stderr (and updates of the retained ROOT/locate status). */
  statusIntervalS: number;
  /** Seconds to keep trying a lost broker before stopping with exit 1. */
  brokerGiveUpS: number;
}

export const fleetOptionSpecs: readonly OptionSpec<keyof FleetOptions>[] = [
  textOption('mqtt', 'mqtt', 'url', null, 'locate live from the stations on this MQTT broker, e.g. mqtt://127.0.0.1:1883 (instead of LOG files)', { defaultText: 'off', check: brokerUrlProblem }),
  textOption('topicRoot', 'topic-root', 'text', DEFAULT_TOPIC_ROOT, 'topic root: stations publish ROOT/STATION/events and ROOT/STATION/status, fixes go to ROOT/fixes', { check: topicRootProblem }),
  numberOption('statusIntervalS', 'status-interval', 's', 60, { min: 1, max: 86_400, unit: 's' }, 'seconds between status lines on stderr (and the retained ROOT/locate status)'),
  numberOption('brokerGiveUpS', 'broker-give-up', 's', 300, { min: 1, max: 86_400, unit: 's' }, 'seconds to keep trying a lost broker before stopping (exit 1)'),
];

export function resolveFleetOptions(partial: Partial<FleetOptions> = {}): FleetOptions {
  return resolveWithSpecs<FleetOptions>(fleetOptionSpecs, partial, 'locate');
}

/**
 * The settings of the MQTT sink (mqtt-sink.ts): the options object, one spec per option
 * (command line, the profile's "mqtt" section) and validation.
 */
import { flagOption, resolveWithSpecs, sizeOption, textOption, type OptionSpec } from '../options/option-spec.js';

export interface MqttOptions {
  /** Broker URL (mqtt://host:port or mqtts://host:port); null = no MQTT. */
  mqtt: string | null;
  /** Also publish frame records (QoS 0). */
  mqttFrames: boolean;
  /** Directory of the disk-backed event queue; null = ./bearline-mqtt-queue. */
  mqttQueueDir: string | null;
  /** Most bytes of unsent events to keep; the oldest go first. */
  mqttQueueMax: number;
}

/** Where events wait when --mqtt-queue-dir is not given (relative to the working folder). */
export const DEFAULT_MQTT_QUEUE_DIR = 'bearline-mqtt-queue';

/** The problem with a broker URL, or null when it is one bearline can use. */
export function brokerUrlProblem(raw: string): string | null {
  let url: URL;
  try {
    url = new URL(raw);
  } catch {
    return 'is not a URL (write it like mqtt://127.0.0.1:1883)';
  }
  if (url.protocol !== 'mqtt:' && url.protocol !== 'mqtts:') return 'must start with mqtt:// or mqtts://';
  if (url.hostname === '') return 'names no host';
  if (url.username !== '' || url.password !== '') return 'must not hold a user name or password (they would show in the process list)';
  return null;
}

export const mqttOptionSpecs: readonly OptionSpec<keyof MqttOptions>[] = [
  textOption('mqtt', 'mqtt', 'url', null, 'publish events and gaps to this MQTT broker, e.g. mqtt://127.0.0.1:1883', { defaultText: 'off', check: brokerUrlProblem }),
  flagOption('mqttFrames', 'mqtt-frames', false, 'also publish one frame record per hop (QoS 0, not queued while the broker is away)'),
  textOption('mqttQueueDir', 'mqtt-queue-dir', 'dir', null, 'where events wait while the broker is unreachable', { defaultText: `./${DEFAULT_MQTT_QUEUE_DIR}` }),
  sizeOption('mqttQueueMax', 'mqtt-queue-max', 16 * 1024 ** 2, 64 * 1024, 'most unsent events to keep (oldest dropped first), e.g. 16M'),
];

export function resolveMqttOptions(partial: Partial<MqttOptions>): MqttOptions {
  return resolveWithSpecs<MqttOptions>(mqttOptionSpecs, partial, 'mqtt');
}

/**
 * The settings of the MQTT sink (mqtt-sink.ts): the options object, one spec per option
 * (command line, the profile's "mqtt" section) and validation.
 */
import { join } from 'node:path';
import { flagOption, resolveWithSpecs, sizeOption, textOption, type OptionSpec } from '../options/option-spec.js';
import { STATE_DIR_RULE, stateDir } from '../util/state-dir.js';

export interface MqttOptions {
  /** Broker URL (mqtt://host:port or mqtts://host:port); null = no MQTT. */
  mqtt: string | null;
  /** Also publish frame records (QoS 0). */
  mqttFrames: boolean;
  /** Folder of the stations' disk-backed event queues (each in DIR/STATION); null = the state folder's mqtt-queue (util/state-dir.ts). */
  mqttQueueDir: string | null;
  /** Most bytes of unsent events to keep; the oldest go first. */
  mqttQueueMax: number;
}

/** The folder that holds the stations' queues: --mqtt-queue-dir, else STATE/mqtt-queue (never the working folder). */
export function mqttQueueRoot(options: Pick<MqttOptions, 'mqttQueueDir'>, env: NodeJS.ProcessEnv = process.env): string {
  return options.mqttQueueDir ?? join(stateDir(env), 'mqtt-queue');
}

/** One station's queue folder: ROOT/STATION, so stations that share a root never share a queue. */
export function mqttQueueFolder(options: Pick<MqttOptions, 'mqttQueueDir'>, station: string, env: NodeJS.ProcessEnv = process.env): string {
  return join(mqttQueueRoot(options, env), station);
}

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
  textOption(
    'mqttQueueDir',
    'mqtt-queue-dir',
    'dir',
    null,
    `where events wait while the broker is unreachable: each station's queue in DIR/STATION, locked to one process (STATE: ${STATE_DIR_RULE})`,
    { defaultText: 'STATE/mqtt-queue' },
  ),
  sizeOption('mqttQueueMax', 'mqtt-queue-max', 16 * 1024 ** 2, 64 * 1024, 'most unsent events to keep (oldest dropped first), e.g. 16M'),
];

export function resolveMqttOptions(partial: Partial<MqttOptions>): MqttOptions {
  return resolveWithSpecs<MqttOptions>(mqttOptionSpecs, partial, 'mqtt');
}

/**
 * Test driver: connects an MQTT sink, publishes COUNT events, prints "ready" once the broker
 * has acknowledged them all, then idles until killed.
 *
 *   node --import tsx test/helpers/mqtt-driver.ts BROKER_URL STATION QUEUE_DIR COUNT
 */
import { MqttSink } from '../../src/sinks/mqtt-sink.js';

const [url, station, queueDir, countText] = process.argv.slice(2);
const sink = new MqttSink(station!, { mqtt: url!, mqttQueueDir: queueDir! }, { retryMs: 200, onWarning: (m) => process.stderr.write(`${m}\n`) });
for (let n = 0; n < Number(countText); n++) sink.event({ start_s: n, end_s: n + 0.3, azimuth_deg: 40, spread_deg: 2, confidence: 0.7, track: n });
const poll = setInterval(() => {
  const s = sink.stats();
  if (s.connected && s.queued === 0) {
    clearInterval(poll);
    process.stdout.write('ready\n');
    setInterval(() => {}, 1000);
  }
}, 20);

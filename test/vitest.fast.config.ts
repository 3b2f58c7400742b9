import { defineConfig, mergeConfig } from 'vitest/config';
import full from './vitest.config.js';

/**
 * `npm run test:fast`: every test but the heavy ones, for the edit-test loop. Left out: the
 * simulator's scenes (test/sim, test/accuracy), the live runs with stand-in recorders and
 * brokers (test/live, the MQTT sink and queues and live locating against mosquitto), the README's
 * command lines, the install test, the browser viewers in Chromium, and the report's simulated
 * night and week of logs.
 * `npm test` runs them all.
 */
export const HEAVY = [
  'test/sim/**',
  'test/accuracy/**',
  'test/live/**',
  'test/io/mqtt-sink.test.ts',
  'test/io/mqtt-queue.test.ts',
  'test/cli/readme-commands.test.ts',
  'test/station/install.test.ts',
  'test/fleet/**',
  'test/feed/viewer.test.ts',
  'test/feed/viewer-history.test.ts',
  'test/feed/evidence-live.test.ts',
  'test/report/night-report.test.ts',
  'test/report/week-memory.test.ts',
];

export default mergeConfig(full, defineConfig({ test: { exclude: HEAVY } }));

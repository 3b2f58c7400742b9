import { spawnSync } from 'node:child_process';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { tempDir } from '../helpers/temp-dir.js';
import { PROFILE_SECTIONS } from '../../src/cli/analysis-flags.js';
import { resolveMqttOptions, type MqttOptions } from '../../src/sinks/mqtt-options.js';
import { resolveRecordLogOptions, type RecordLogOptions } from '../../src/sinks/record-log-options.js';
import { resolveAnalysisOptions, type AnalysisOptions } from '../../src/analysis/analysis-options.js';
import { loadProfile, profileValues } from '../../src/options/profile.js';
import { defaultTrackerOptions, resolveTrackerOptions, type TrackerOptions } from '../../src/track/options.js';
import { resolveStationOptions, type StationOptions } from '../../src/station/runtime-options.js';

const root = new URL('../../', import.meta.url);
const UNIT = new URL('configs/systemd/bearline-station.service', root).pathname;
const PROFILE = new URL('configs/profiles/station-low-cpu.json', root).pathname;

describe('configs/profiles/station-low-cpu.json', () => {
  const profile = loadProfile(PROFILE, '', PROFILE_SECTIONS);

  it('its station, log and mqtt sections load through the same option specs as the flags', () => {
    const st = resolveStationOptions(profileValues<StationOptions>(profile, 'station'));
    const lg = resolveRecordLogOptions({ ...profileValues<RecordLogOptions>(profile, 'log'), logDir: '/var/lib/bearline/logs' });
    const mq = resolveMqttOptions(profileValues<MqttOptions>(profile, 'mqtt'));
    expect(st.statusEvery).toBe(15);
    expect(lg).toMatchObject({ rotateSize: 32 * 1024 ** 2, maxDisk: 4 * 1024 ** 3, logFrames: false, fsyncEvery: 10 });
    expect(mq.mqttFrames).toBe(false);
  });

  it('its analysis section (frame and hop in samples) is valid analysis options at 48 kHz, with no overlap and fewer candidates', () => {
    const a = resolveAnalysisOptions(profileValues<AnalysisOptions>(profile, 'analysis'), 48_000);
    expect(a.frame).toBe(1024);
    // hop = frame: half the hops of the default 50 % overlap, so about half the FFTs (common practice, no source)
    expect(a.hop).toBe(a.frame);
    // fewer direction candidates compared per hop and fewer tracks than the defaults: less work per hop
    const defaults = resolveAnalysisOptions({}, 48_000);
    expect(a.maxCandidates).toBeLessThan(defaults.maxCandidates);
    expect(a.maxSources).toBeLessThanOrEqual(a.maxCandidates);
    const t = resolveTrackerOptions(profileValues<TrackerOptions>(profile, 'tracker'), 'station-low-cpu.json');
    expect(t.maxTracks).toBeLessThan(defaultTrackerOptions.maxTracks);
  });
});

// Checked by systemd's own parser (systemd-analyze verify, systemd.service(5), systemd.exec(5),
// systemd.resource-control(5)): it prints a line for each setting it cannot parse.
describe('configs/systemd/bearline-station.service', () => {
  function verify(path: string): string {
    if (!existsSync('/usr/bin/systemd-analyze')) throw new Error('this test needs systemd-analyze (Debian package systemd)');
    const r = spawnSync('/usr/bin/systemd-analyze', ['verify', path], { encoding: 'utf8' });
    return `${r.stdout}${r.stderr}`;
  }

  it('parses cleanly, and the same check flags a broken copy', () => {
    expect(verify(UNIT)).toBe('');
    const bad = join(tempDir('unit').dir, 'bearline-station.service');
    writeFileSync(bad, readFileSync(UNIT, 'utf8').replace('Restart=on-failure', 'Restart=sometimes').replace('CPUQuota=60%', 'CPUQuota=lots'));
    const out = verify(bad);
    expect(out).toMatch(/restart specifier.*sometimes/);
    expect(out).toMatch(/CPU quota 'lots'/);
  });

  it('runs as a dedicated user, restarts on failure after a delay, logs to the journal, has limits', () => {
    const text = readFileSync(UNIT, 'utf8');
    const settings = new Map(
      text
        .split('\n')
        .filter((l) => /^[A-Za-z]+=/.test(l))
        .map((l) => [l.slice(0, l.indexOf('=')), l.slice(l.indexOf('=') + 1)] as const),
    );
    expect(settings.get('User')).toBe('bearline');
    expect(settings.get('Restart')).toBe('on-failure');
    expect(Number(settings.get('RestartSec'))).toBeGreaterThan(0);
    expect(settings.get('RestartPreventExitStatus')).toBe('2'); // bad usage: restarting will not help
    expect(settings.get('StandardError')).toBe('journal');
    expect(settings.get('KillSignal')).toBe('SIGTERM');
    for (const k of ['CPUQuota', 'MemoryMax', 'TasksMax', 'LimitNOFILE']) expect(settings.has(k)).toBe(true);
  });
});

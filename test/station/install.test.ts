/**
 * Installing bearline as a command, as the README's quick start says (`npm install -g .` in the
 * built checkout), into a temporary npm prefix, offline; then the systemd unit's exact ExecStart
 * line run through that installed command, the way systemd would run it (issue 17 item 1).
 *
 * Outside checks: npm itself does the install (its bin link from package.json's "bin"); the
 * unit's ExecStart, EnvironmentFile and StateDirectory are read from the unit file and expanded
 * as systemd.exec(5) and systemd.service(5) say ($VAR in ExecStart splits on whitespace;
 * StateDirectory= sets $STATE_DIRECTORY); systemd-analyze verify parses the unit (configs.test.ts).
 */
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { tempDir } from '../helpers/temp-dir.js';
import { callsRecording, standInRecorder } from '../live/helpers.js';

const ROOT = new URL('../../', import.meta.url).pathname;
const UNIT = readFileSync(join(ROOT, 'configs/systemd/bearline-station.service'), 'utf8');

describe('npm install -g . into a temporary prefix, offline', () => {
  const tmp = tempDir('install');
  const prefix = join(tmp.dir, 'prefix');
  const elsewhere = join(tmp.dir, 'elsewhere');
  let install: { status: number | null; out: string } = { status: null, out: '' };
  const env = (): NodeJS.ProcessEnv => ({ ...process.env, PATH: `${join(prefix, 'bin')}:${process.env.PATH}` });

  beforeAll(() => {
    mkdirSync(elsewhere, { recursive: true });
    // The checkout is built (npm test builds dist/ first), so no network and no build are needed:
    // --offline keeps npm off the registry, and --ignore-scripts keeps it from running the
    // package's `prepare` (a rebuild of dist/ in place, which other test files running at the
    // same time import: one failed on a half-written dist/dsp/fft.js).
    const r = spawnSync('npm', ['install', '-g', '.', '--prefix', prefix, '--offline', '--no-audit', '--no-fund', '--ignore-scripts'], { cwd: ROOT, encoding: 'utf8', timeout: 180_000 });
    install = { status: r.status, out: `${r.stdout}${r.stderr}${r.error ? String(r.error) : ''}` };
  }, 200_000);

  it('puts `bearline` on PATH: it runs from another folder by name alone', (ctx) => {
    if (install.status !== 0 && /ENOTCACHED|ENOTFOUND|offline/.test(install.out)) ctx.skip(); // npm could not work offline here: nothing to test
    expect(install.status, install.out).toBe(0);
    const which = spawnSync('sh', ['-c', 'command -v bearline'], { cwd: elsewhere, env: env(), encoding: 'utf8' });
    expect(which.stdout.trim()).toBe(join(prefix, 'bin', 'bearline'));
    const version = spawnSync('bearline', ['--version'], { cwd: elsewhere, env: env(), encoding: 'utf8' });
    expect(version.stdout.trim()).toBe((JSON.parse(readFileSync(join(ROOT, 'package.json'), 'utf8')) as { version: string }).version);
    const help = spawnSync('bearline', ['--help'], { cwd: elsewhere, env: env(), encoding: 'utf8' });
    for (const cmd of ['scan', 'listen', 'demo', 'simulate', 'accuracy', 'check-array', 'stimulus', 'locate']) expect(help.stdout).toContain(cmd);
    // it finds its own presets from anywhere (configs/ ships with the package)
    const stim = spawnSync('bearline', ['stimulus', '--out', 'clicks.wav', '--kind', 'clicks', '--duration', '1', '--repeat', '1', '--channels', '2'], { cwd: elsewhere, env: env(), encoding: 'utf8' });
    expect(stim.status, stim.stderr).toBe(0);
    const scan = spawnSync('bearline', ['scan', 'clicks.wav', '--array', 'pair-20cm'], { cwd: elsewhere, env: env(), encoding: 'utf8' });
    expect(scan.status, scan.stderr).toBe(0);
  });

  it("the unit's exact ExecStart line, run as systemd would, starts a station through the installed command; SIGTERM stops it with exit 0", async (ctx) => {
    if (install.status !== 0) ctx.skip(); // the install test above says why
    const exec = /^ExecStart=(.+)$/m.exec(UNIT)![1]!;
    expect(exec).toBe('/usr/bin/env bearline listen $BEARLINE_ARGS');
    expect(/^StateDirectory=(.+)$/m.exec(UNIT)![1]).toBe('bearline');
    expect(/^KillSignal=(.+)$/m.exec(UNIT)![1]).toBe('SIGTERM');
    // The install note's EnvironmentFile line, with its paths moved into the temp folder.
    const state = join(tmp.dir, 'state');
    mkdirSync(state, { recursive: true });
    const args = /BEARLINE_ARGS=([^']+)'/.exec(UNIT)![1]!
      .replace(/\/var\/lib\/bearline/g, state)
      .replace(/\/etc\/bearline\//g, join(ROOT, 'configs/profiles/'))
      .replace('square-10cm', 'pair-20cm'); // the stand-in recorder streams a two-mic recording
    // systemd.service(5): "$VAR" unquoted in ExecStart is split at whitespace into several words.
    const words = exec.replace('$BEARLINE_ARGS', args).split(/\s+/);
    // A stand-in arecord (the note's recorder): sox-made calls at +20 deg, streamed at real time.
    const rec = callsRecording(tmp.dir, 'unit-calls', 20, 4);
    const recBin = join(tmp.dir, 'recorder-bin');
    standInRecorder(recBin, 'arecord', rec.raw, 4, ['exec sleep 60']);
    const child = spawn(words[0]!, words.slice(1), {
      cwd: state, // WorkingDirectory=/var/lib/bearline
      env: { PATH: `${join(prefix, 'bin')}:${recBin}:/usr/bin:/bin`, STATE_DIRECTORY: state, HOME: tmp.dir },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    let stderr = '';
    child.stderr!.setEncoding('utf8').on('data', (d: string) => (stderr += d));
    const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
    const logs = join(state, 'logs');
    const end = Date.now() + 20_000;
    while (!(existsSync(logs) && readdirSync(logs).some((n) => n.startsWith('marsh-east.events.'))) && Date.now() < end && child.exitCode === null) await new Promise((r) => setTimeout(r, 100));
    child.kill('SIGTERM');
    expect(await exited, stderr).toBe(0);
    expect(stderr).toMatch(/SIGTERM: closing .*\n(.*\n)*bearline: all records written \(\d+ events? to log files in .*\); stopped/);
    const events = readdirSync(logs).filter((n) => n.startsWith('marsh-east.events.')).flatMap((n) => readFileSync(join(logs, n), 'utf8').trim().split('\n')).map((l) => JSON.parse(l) as { azimuth_deg: number });
    expect(events.length).toBeGreaterThan(0);
    for (const e of events) expect(Math.abs(e.azimuth_deg - 20)).toBeLessThan(3);
  }, 60_000);
});

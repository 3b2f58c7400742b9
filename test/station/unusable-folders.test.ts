/**
 * A --log-dir or MQTT queue folder that cannot be used is bad input: exit 2 with one line
 * naming it (interface.md, "Exit codes"), so systemd's RestartPreventExitStatus=2 stops instead
 * of restarting for ever (issue 17). /proc refuses new entries with ENOENT on Linux (proc(5)),
 * where Node's recursive mkdir used to loop without end.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, it } from 'vitest';
import { expectUsageFailure, runCli } from '../helpers/cli.js';
import { tempDir } from '../helpers/temp-dir.js';

const tmp = tempDir('folders');
const listen = ['listen', '--stdin', '--rate', '48000', '--channels', '2', '--spacing', '0.2', '--quiet'];
const input = Buffer.alloc(4800 * 4);

describe('unusable folders exit 2', () => {
  it('--log-dir that is a file, or under /proc', () => {
    const file = join(tmp.dir, 'a-file');
    writeFileSync(file, 'x');
    expectUsageFailure(runCli([...listen, '--log-dir', file], { input, timeoutMs: 20_000 }), /--log-dir .*a-file is a file, not a folder; give a folder/);
    expectUsageFailure(runCli([...listen, '--log-dir', join(file, 'logs')], { input, timeoutMs: 20_000 }), /--log-dir .*a-file is not a folder; give another path/);
    expectUsageFailure(runCli([...listen, '--log-dir', '/proc/bearline-logs'], { input, timeoutMs: 20_000 }), /cannot use log directory \/proc\/bearline-logs: ENOENT.*pick another --log-dir/);
  });

  it('--mqtt-queue-dir that is a file, or under /proc; and the default folder when it cannot be made', () => {
    const file = join(tmp.dir, 'q-file');
    writeFileSync(file, 'x');
    const mqtt = ['--mqtt', 'mqtt://127.0.0.1:9', '--station', 'heron-2'];
    expectUsageFailure(runCli([...listen, ...mqtt, '--mqtt-queue-dir', file], { input, timeoutMs: 20_000 }), /--mqtt-queue-dir .*q-file is a file, not a folder/);
    expectUsageFailure(runCli([...listen, ...mqtt, '--mqtt-queue-dir', '/proc/bearline-q'], { input, timeoutMs: 20_000 }), /cannot use the MQTT queue folder \/proc\/bearline-q\/heron-2: ENOENT.*pick another --mqtt-queue-dir/);
    // the default under $XDG_STATE_HOME, which here is a file
    expectUsageFailure(runCli([...listen, ...mqtt], { input, timeoutMs: 20_000, env: { XDG_STATE_HOME: file, STATE_DIRECTORY: '' } }), /the MQTT queue folder \(the default; give --mqtt-queue-dir to move it\) .*q-file.* is not a folder/);
  });
});

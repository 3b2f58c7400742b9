import { spawnSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { readInterval } from '../../src/sources/polled-reader.js';
import { tempDir } from '../helpers/temp-dir.js';

/**
 * How long stdin may be left unread (src/sources/polled-reader.ts): three quarters of what the
 * descriptor holds before its writer must wait. A pipe holds 16 pages, 65,536 bytes (Linux
 * man page pipe(7), "Pipe capacity"); a Unix stream socket (what Node's spawn and supervisors
 * give a child as stdin) holds its sender's buffer, whose default is net.core.wmem_default
 * (man page socket(7), "wmem_default"), of which the reader counts on half.
 */
const tmp = tempDir();
afterAll(() => tmp.cleanup());
const module = fileURLToPath(new URL('../../src/sources/polled-reader.ts', import.meta.url));

/** inputCapacity(0) in a child whose stdin is `stdin` (a shell redirection). */
function capacityOfStdin(shellStdin: string, wmemFile?: string): number {
  const code = `import { inputCapacity } from ${JSON.stringify(module)}; console.log(inputCapacity(0${wmemFile ? `, ${JSON.stringify(wmemFile)}` : ''}));`;
  const script = join(tmp.dir, `cap-${Math.random().toString(36).slice(2)}.mts`);
  writeFileSync(script, code);
  const r = spawnSync('sh', ['-c', `${shellStdin} "${process.execPath}" --import tsx "${script}"`], { encoding: 'utf8' });
  expect(r.status, r.stderr).toBe(0);
  return Number(r.stdout.trim());
}

describe('what stdin holds while bearline does not read it', () => {
  it('a pipe: 65,536 bytes; a Unix socket: half its send buffer; a file: 65,536 (reads never wait there)', () => {
    expect(capacityOfStdin('true |')).toBe(65536);
    const wmem = join(tmp.dir, 'wmem_default');
    writeFileSync(wmem, '212992\n');
    // Node's spawn gives its child a Unix socket pair for a piped stdin.
    const viaSocket = spawnSync(process.execPath, ['--import', 'tsx', '-e', `import(${JSON.stringify(module)}).then((m) => console.log(m.inputCapacity(0, ${JSON.stringify(wmem)})))`], { encoding: 'utf8', stdio: ['pipe', 'pipe', 'pipe'], input: '' });
    expect(viaSocket.status, viaSocket.stderr).toBe(0);
    expect(Number(viaSocket.stdout.trim())).toBe(106496);
    writeFileSync(wmem, '1048576\n');
    const bigger = spawnSync(process.execPath, ['--import', 'tsx', '-e', `import(${JSON.stringify(module)}).then((m) => console.log(m.inputCapacity(0, ${JSON.stringify(wmem)})))`], { encoding: 'utf8', input: '' });
    expect(Number(bigger.stdout.trim())).toBe(524288);
    expect(capacityOfStdin(`< ${JSON.stringify(wmem)}`)).toBe(65536);
  });

  it('the read interval: --read-every, at most three quarters of the capacity at the stream rate', () => {
    // 4 channels of 16-bit samples at 48 kHz: 384,000 bytes a second
    expect(readInterval(250, 384000, 65536)).toBeCloseTo(128, 6);
    expect(readInterval(250, 384000, 106496)).toBeCloseTo(208, 6);
    expect(readInterval(100, 384000, 106496)).toBe(100);
    // 2 channels: 192,000 bytes a second; a socket keeps 0.25 s whole
    expect(readInterval(250, 192000, 106496)).toBe(250);
    expect(readInterval(0, 192000, 65536)).toBe(1);
  });
});

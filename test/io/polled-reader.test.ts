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

  it('chunks every --read-every although a pipe must be read more often, every byte in order', () => {
    // 4 channels of 16-bit samples at 48 kHz: 384,000 bytes a second in 20 ms writes for 2 s. A
    // pipe holds 65,536 bytes (pipe(7)), so stdin is read at least every 0.128 s (8 reads a
    // second); with --read-every 0.5 the reads' bytes are kept and handed on in chunks every
    // 0.5 s: 4 or 5 chunks (a late timer only merges them), not 16 (a chunk per read) or 100 (per
    // write). Byte p of the stream is p mod 251, so a lost, repeated or reordered byte shows.
    const producer = join(tmp.dir, 'producer.mjs');
    writeFileSync(producer, `
      const block = 7680; let p = 0; const t0 = performance.now();
      for (let k = 0; k < 100; k++) {
        const wait = t0 + 20 * k - performance.now();
        if (wait > 0) await new Promise((r) => setTimeout(r, wait));
        const b = Buffer.alloc(block);
        for (let i = 0; i < block; i++, p++) b[i] = p % 251;
        process.stdout.write(b);
      }`);
    const consumer = join(tmp.dir, 'consumer.mts');
    writeFileSync(consumer, `
      import { pollFd, polledStdin } from ${JSON.stringify(module)};
      const input = polledStdin(500);
      let p = 0, wrong = 0;
      const sizes = [];
      for await (const chunk of pollFd(input.fd, input.everyMs, 384000, new Promise(() => undefined))) {
        sizes.push(chunk.length);
        for (let i = 0; i < chunk.length; i++, p++) if (chunk[i] !== p % 251) wrong++;
      }
      console.log(JSON.stringify({ bytes: p, wrong, sizes }));`);
    const r = spawnSync('sh', ['-c', `"${process.execPath}" "${producer}" | "${process.execPath}" --import tsx "${consumer}"`], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout.trim()) as { bytes: number; wrong: number; sizes: number[] };
    expect(out.bytes).toBe(768000);
    expect(out.wrong).toBe(0);
    expect(out.sizes.length).toBeGreaterThanOrEqual(3);
    expect(out.sizes.length).toBeLessThanOrEqual(7);
  });
});

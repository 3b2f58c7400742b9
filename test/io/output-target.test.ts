/**
 * Writes that keep what was there (issue 15): the one output helper every command's file
 * outputs go through. What a path is (regular file, symbolic link, FIFO, character device,
 * directory, socket) is asked of the kernel with lstat/stat (POSIX; common practice, no
 * source); the FIFO is read by a separate `cat` process, as a user's pipeline would.
 */
import { spawn } from 'node:child_process';
import { chmodSync, closeSync, lstatSync, mkdirSync, openSync, readdirSync, readFileSync, readlinkSync, statSync, symlinkSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { join } from 'node:path';
import { execFileSync } from 'node:child_process';
import { afterAll, describe, expect, it } from 'vitest';
import { RuntimeFailure, UsageError } from '../../src/util/errors.js';
import { abandonOutput, checkFolderOption, planOutput, planOutputs, writeOutputFiles } from '../../src/sinks/output-target.js';
import { tempDir } from '../helpers/temp-dir.js';

const tmp = tempDir('outputs');
afterAll(() => tmp.cleanup());
let n = 0;
const fresh = (): string => {
  const d = join(tmp.dir, `case${n++}`);
  mkdirSync(d);
  return d;
};
const partialsIn = (dir: string): string[] => readdirSync(dir).filter((f) => f.includes('.partial'));

function usageError(fn: () => unknown): string {
  try {
    fn();
  } catch (err) {
    expect(err).toBeInstanceOf(UsageError);
    return (err as Error).message;
  }
  throw new Error('expected a UsageError');
}

describe('planOutput refuses, before any work, what cannot be written safely', () => {
  it('a directory', () => {
    const d = fresh();
    expect(usageError(() => planOutput('--out', d))).toMatch(/^--out .* is a directory/);
  });
  it('a path whose folder does not exist (also through a symbolic link)', () => {
    const d = fresh();
    expect(usageError(() => planOutput('--out', join(d, 'missing', 'x.jsonl')))).toMatch(/the folder .*missing does not exist/);
    symlinkSync(join(d, 'gone', 'x.jsonl'), join(d, 'link.jsonl'));
    expect(usageError(() => planOutput('--json', join(d, 'link.jsonl')))).toMatch(/^--json .*the folder .*gone does not exist \(the symbolic link points to/);
  });
  it('a socket', async () => {
    const d = fresh();
    const path = join(d, 'sock');
    const server = createServer();
    await new Promise<void>((res) => server.listen(path, res));
    try {
      expect(usageError(() => planOutput('--out', path))).toMatch(/not a file, FIFO or character device/);
    } finally {
      server.close();
    }
  });
  it('an input, also when named through a symbolic link; two outputs naming one file', () => {
    const d = fresh();
    const input = join(d, 'in.wav');
    writeFileSync(input, 'x');
    symlinkSync(input, join(d, 'alias.wav'));
    expect(usageError(() => planOutput('--out', join(d, 'alias.wav'), [input]))).toMatch(/would overwrite the input/);
    symlinkSync(join(d, 'a.json'), join(d, 'b.json'));
    expect(usageError(() => planOutputs([{ option: '--json', path: join(d, 'a.json') }, { option: '--report', path: join(d, 'b.json') }]))).toMatch(/--report and --json name the same file/);
  });
  it('a log folder that is a file, or under a file', () => {
    const d = fresh();
    writeFileSync(join(d, 'f'), 'x');
    expect(usageError(() => checkFolderOption('--log-dir', join(d, 'f')))).toMatch(/^--log-dir .* is a file, not a folder/);
    expect(usageError(() => checkFolderOption('--log-dir', join(d, 'f', 'logs')))).toMatch(/is not a folder/);
    checkFolderOption('--log-dir', join(d, 'new', 'logs')); // created later; its nearest parent is a folder
  });
});

describe('regular files and symbolic links: written aside, renamed when complete', () => {
  it('a regular file is replaced whole and keeps its permissions; no partial file is left', () => {
    const d = fresh();
    const path = join(d, 'out.json');
    writeFileSync(path, 'old\n');
    chmodSync(path, 0o640);
    const t = planOutput('--out', path);
    expect(t.through).toBe(false);
    expect(t.writePath).toBe(`${path}.partial-${process.pid}`);
    writeOutputFiles([{ target: t, data: 'new\n' }]);
    expect(readFileSync(path, 'utf8')).toBe('new\n');
    expect(statSync(path).mode & 0o777).toBe(0o640);
    expect(partialsIn(d)).toEqual([]);
  });

  it('a symbolic link stays a link; its target gets the new contents', () => {
    const d = fresh();
    mkdirSync(join(d, 'real'));
    const real = join(d, 'real', 'calls.jsonl');
    writeFileSync(real, 'old\n');
    symlinkSync('real/calls.jsonl', join(d, 'calls.jsonl'));
    const t = planOutput('--out', join(d, 'calls.jsonl'));
    expect(t.target).toBe(real);
    writeOutputFiles([{ target: t, data: 'new\n' }]);
    expect(lstatSync(join(d, 'calls.jsonl')).isSymbolicLink()).toBe(true);
    expect(readlinkSync(join(d, 'calls.jsonl'))).toBe('real/calls.jsonl');
    expect(readFileSync(real, 'utf8')).toBe('new\n');
    expect([...partialsIn(d), ...partialsIn(join(d, 'real'))]).toEqual([]);
  });

  it('a dangling symbolic link: the file it names is created, the link stays', () => {
    const d = fresh();
    symlinkSync(join(d, 'made.json'), join(d, 'link.json'));
    writeOutputFiles([{ target: planOutput('--out', join(d, 'link.json')), data: '{}\n' }]);
    expect(lstatSync(join(d, 'link.json')).isSymbolicLink()).toBe(true);
    expect(readFileSync(join(d, 'made.json'), 'utf8')).toBe('{}\n');
  });

  it('a failure midway abandons every partial file: the old files stay byte for byte', () => {
    const d = fresh();
    const a = join(d, 'a.json');
    const b = join(d, 'b.wav');
    writeFileSync(a, 'old a\n');
    writeFileSync(b, Buffer.from([1, 2, 3]));
    const [ta, tb] = planOutputs([
      { option: '--json', path: a },
      { option: '--out', path: b },
    ]);
    function* failing(): Generator<Uint8Array> {
      yield Buffer.alloc(4096, 7);
      throw new RuntimeFailure('the renderer failed halfway');
    }
    expect(() => writeOutputFiles([{ target: ta!, data: 'new a\n' }, { target: tb!, data: failing() }])).toThrow(/failed halfway/);
    expect(readFileSync(a, 'utf8')).toBe('old a\n');
    expect([...readFileSync(b)]).toEqual([1, 2, 3]);
    expect(partialsIn(d)).toEqual([]);
  });

  it('abandon deletes the partial file and nothing else', () => {
    const d = fresh();
    const path = join(d, 'x.csv');
    writeFileSync(path, 'old');
    const t = planOutput('--out', path);
    writeFileSync(t.writePath, 'half');
    abandonOutput(t);
    expect(readFileSync(path, 'utf8')).toBe('old');
    expect(partialsIn(d)).toEqual([]);
  });
});

describe('FIFOs, devices and open descriptors: written straight through, never replaced', () => {
  it('a FIFO read by another process gets the data; it is still a FIFO afterwards', async () => {
    const d = fresh();
    const fifo = join(d, 'pipe');
    execFileSync('mkfifo', [fifo]);
    const got = join(d, 'got.txt');
    const reader = spawn('sh', ['-c', 'cat "$0" > "$1"', fifo, got]);
    const done = new Promise<number | null>((res) => reader.on('exit', res));
    const t = planOutput('--out', fifo);
    expect(t.through).toBe(true);
    writeOutputFiles([{ target: t, data: [Buffer.from('frog 1\n'), Buffer.from('frog 2\n')] }]);
    expect(await done).toBe(0);
    expect(readFileSync(got, 'utf8')).toBe('frog 1\nfrog 2\n');
    expect(lstatSync(fifo).isFIFO()).toBe(true);
    expect(partialsIn(d)).toEqual([]);
  });

  // A private node of the null device (Linux char 1,3, mknod needs root), never /dev/null
  // itself: a regression would replace the node, and /dev/null is shared by the whole machine.
  it.skipIf(process.getuid?.() !== 0)('the null device is written through and stays the character device', () => {
    const d = fresh();
    const dev = join(d, 'null');
    execFileSync('mknod', ['-m', '666', dev, 'c', '1', '3']);
    const t = planOutput('--out', dev);
    expect(t).toMatchObject({ through: true, writePath: dev });
    writeOutputFiles([{ target: t, data: 'nothing to keep\n' }]);
    expect(lstatSync(dev).isCharacterDevice()).toBe(true);
    expect(partialsIn(d)).toEqual([]);
  });

  it('/dev/fd/N naming an open regular file is written through (appended), not renamed over', () => {
    const d = fresh();
    const path = join(d, 'redirected.txt');
    writeFileSync(path, 'kept\n');
    const fd = openSync(path, 'a');
    try {
      const t = planOutput('--out', `/dev/fd/${fd}`);
      expect(t.through).toBe(true);
      writeOutputFiles([{ target: t, data: 'added\n' }]);
    } finally {
      closeSync(fd);
    }
    expect(readFileSync(path, 'utf8')).toBe('kept\nadded\n');
    expect(partialsIn(d)).toEqual([]);
  });
});

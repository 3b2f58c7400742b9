import * as nodeFs from 'node:fs';
import { RuntimeFailure } from '../util/errors.js';

/**
 * The file operations an append-only line file uses. Tests inject a failing layer to show
 * that an I/O error never leaves a partial line behind.
 */
export interface LineFileFs {
  openSync(path: string, flags: string): number;
  writeSync(fd: number, buf: Buffer, offset: number, length: number): number;
  fsyncSync(fd: number): void;
  ftruncateSync(fd: number, len: number): void;
  fstatSync(fd: number): { size: number };
  closeSync(fd: number): void;
}

export const realFs: LineFileFs = {
  openSync: (p, f) => nodeFs.openSync(p, f),
  writeSync: (fd, b, o, l) => nodeFs.writeSync(fd, b, o, l),
  fsyncSync: (fd) => nodeFs.fsyncSync(fd),
  ftruncateSync: (fd, len) => nodeFs.ftruncateSync(fd, len),
  fstatSync: (fd) => nodeFs.fstatSync(fd),
  closeSync: (fd) => nodeFs.closeSync(fd),
};

function errCode(err: unknown): string {
  const code = (err as NodeJS.ErrnoException | null)?.code;
  return typeof code === 'string' ? code : 'unknown error';
}

/** A one-line explanation of a write error, with what to do about it. */
export function describeWriteError(path: string, err: unknown): string {
  const code = errCode(err);
  switch (code) {
    case 'ENOSPC':
      return `cannot write ${path}: the disk is full (ENOSPC); free some space or set a lower --max-disk; every record before this one is intact`;
    case 'EDQUOT':
      return `cannot write ${path}: the disk quota is used up (EDQUOT); raise the quota or set a lower --max-disk; every record before this one is intact`;
    case 'EIO':
      return `cannot write ${path}: the storage reported an I/O error (EIO); check the card or disk and its cable; every record before this one is intact`;
    case 'EROFS':
      return `cannot write ${path}: the file system is read-only (EROFS); remount it read-write; every record before this one is intact`;
    default:
      return `cannot write ${path}: ${(err as Error | null)?.message ?? code}; every record before this one is intact`;
  }
}

/**
 * An append-only file of whole lines. append() hands a complete line (or a batch of complete
 * lines) to the kernel in one write call; if the write fails or comes up short, the file is
 * cut back to where it was, so it never ends in a partial line, and a RuntimeFailure says why.
 */
export class LineFile {
  private fd: number;
  private bytes: number;
  private dirty = false;
  private closed = false;

  constructor(
    readonly path: string,
    private readonly fs: LineFileFs = realFs,
  ) {
    try {
      this.fd = fs.openSync(path, 'a');
      this.bytes = fs.fstatSync(this.fd).size;
    } catch (err) {
      throw new RuntimeFailure(`cannot open ${path} for writing: ${(err as Error).message}`);
    }
  }

  get size(): number {
    return this.bytes;
  }

  append(buf: Buffer): void {
    if (this.closed) throw new RuntimeFailure(`internal: write to closed file ${this.path}`);
    const before = this.bytes;
    let done = 0;
    try {
      while (done < buf.length) {
        const n = this.fs.writeSync(this.fd, buf, done, buf.length - done);
        if (n <= 0) throw Object.assign(new Error('write returned no progress'), { code: 'EIO' });
        done += n;
      }
    } catch (err) {
      // Cut back even when the failed call reported no progress: a failing device may have
      // stored part of it anyway.
      try {
        this.fs.ftruncateSync(this.fd, before);
      } catch {
        // The cut failed too; the torn-line repair on the next start handles it.
      }
      throw new RuntimeFailure(describeWriteError(this.path, err));
    }
    this.bytes += buf.length;
    this.dirty = true;
  }

  /** fsync if anything was written since the last sync. */
  sync(): void {
    if (this.closed || !this.dirty) return;
    try {
      this.fs.fsyncSync(this.fd);
    } catch (err) {
      throw new RuntimeFailure(describeWriteError(this.path, err));
    }
    this.dirty = false;
  }

  close(): void {
    if (this.closed) return;
    try {
      this.sync();
    } finally {
      this.closed = true;
      this.fs.closeSync(this.fd);
    }
  }
}

const NL = 0x0a;

/**
 * Pure core of the torn-line check. `tail` is the end of a file (the whole file when
 * `fromStart`). Returns how many bytes at the end do not form whole, valid lines: bytes after
 * the last newline, or a final line that `lineOk` rejects. Returns -1 when the window holds no
 * line start and the caller must read a longer tail.
 */
export function tornTailLength(tail: Uint8Array, fromStart: boolean, lineOk: (line: string) => boolean): number {
  let end = tail.length;
  while (end > 0) {
    if (tail[end - 1] !== NL) {
      const lastNl = tail.lastIndexOf(NL, end - 1);
      if (lastNl < 0 && !fromStart) return -1;
      end = lastNl + 1;
      continue;
    }
    const prevNl = tail.lastIndexOf(NL, end - 2);
    if (prevNl < 0 && !fromStart) return -1;
    const line = Buffer.from(tail.buffer, tail.byteOffset + prevNl + 1, end - 1 - (prevNl + 1)).toString('utf8');
    if (lineOk(line)) break;
    end = prevNl + 1;
  }
  return tail.length - end;
}

export interface TailRepair {
  path: string;
  cutBytes: number;
  /** Where the cut bytes were kept, if anywhere. */
  keptAt: string | null;
}

/**
 * Check the end of a line file and cut off a torn or invalid last line. The cut bytes are
 * appended to `PATH.torn` when `keep` is true. Returns null when the file was whole.
 */
export function repairTail(path: string, lineOk: (line: string) => boolean, keep = true): TailRepair | null {
  const fd = nodeFs.openSync(path, 'r+');
  try {
    const size = nodeFs.fstatSync(fd).size;
    let window = Math.min(size, 256 * 1024);
    for (;;) {
      const tail = Buffer.alloc(window);
      nodeFs.readSync(fd, tail, 0, window, size - window);
      const cut = tornTailLength(tail, window === size, lineOk);
      if (cut < 0) {
        window = Math.min(size, window * 4);
        continue;
      }
      if (cut === 0) return null;
      let keptAt: string | null = null;
      if (keep) {
        keptAt = `${path}.torn`;
        nodeFs.appendFileSync(keptAt, tail.subarray(window - cut));
      }
      nodeFs.ftruncateSync(fd, size - cut);
      nodeFs.fsyncSync(fd);
      return { path, cutBytes: cut, keptAt };
    }
  } finally {
    nodeFs.closeSync(fd);
  }
}

/** A JSON Lines line is valid when it parses to an object. */
export function jsonObjectLine(line: string): boolean {
  try {
    const v: unknown = JSON.parse(line);
    return typeof v === 'object' && v !== null && !Array.isArray(v);
  } catch {
    return false;
  }
}

/**
 * A lock file holding the owner's process id, so that two processes never share a folder's
 * files (two copies of one station on one MQTT queue would send each other's events and
 * hand out the same seq twice). A lock left by a process that is gone (a crash, a power cut)
 * is taken over; one held by a live process is refused.
 */
import * as nodeFs from 'node:fs';

export interface PidLock {
  readonly path: string;
  /** The dead process whose lock was taken over, or null. */
  readonly tookOverFrom: number | null;
  release(): void;
}

/** Why the lock cannot be had: held by a live process (its pid), or could not be written. */
export class LockHeld extends Error {
  constructor(
    readonly path: string,
    readonly pid: number,
  ) {
    super(`${path} is held by process ${pid}`);
  }
}

/**
 * Whether `pid` is a running process that may hold the lock. Where /proc tells the command
 * line, a live process that is not Node (a pid reused after a reboot) does not count.
 */
export function lockOwnerAlive(pid: number): boolean {
  if (!Number.isSafeInteger(pid) || pid <= 0) return false;
  if (pid === process.pid) return true;
  try {
    process.kill(pid, 0);
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code !== 'EPERM') return false;
  }
  try {
    const cmd = nodeFs.readFileSync(`/proc/${pid}/cmdline`, 'utf8');
    return /node|bearline/.test(cmd);
  } catch {
    return true; // no /proc: trust the signal check
  }
}

function readPid(path: string): number {
  try {
    return Number.parseInt(nodeFs.readFileSync(path, 'utf8').trim(), 10);
  } catch {
    return Number.NaN;
  }
}

/** Take the lock at `path` or throw LockHeld. Other errors (a folder that cannot be written) are thrown as they are. */
export function takePidLock(path: string): PidLock {
  let tookOverFrom: number | null = null;
  for (let attempt = 0; attempt < 3; attempt++) {
    try {
      const fd = nodeFs.openSync(path, 'wx', 0o644);
      try {
        nodeFs.writeSync(fd, `${process.pid}\n`);
        nodeFs.fsyncSync(fd);
      } finally {
        nodeFs.closeSync(fd);
      }
      return {
        path,
        tookOverFrom,
        release() {
          if (readPid(path) === process.pid) nodeFs.rmSync(path, { force: true });
        },
      };
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code !== 'EEXIST') throw err;
    }
    const owner = readPid(path);
    if (lockOwnerAlive(owner)) throw new LockHeld(path, owner);
    // A stale lock (its process is gone, or the file is empty or garbled): remove it and try again.
    tookOverFrom = Number.isNaN(owner) ? -1 : owner;
    nodeFs.rmSync(path, { force: true });
  }
  throw new LockHeld(path, readPid(path));
}

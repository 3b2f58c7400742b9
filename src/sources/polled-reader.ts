import { fstatSync, readFileSync, readSync } from 'node:fs';

/**
 * Raw bytes from a file descriptor (a pipe or socket: stdin), handed on every `everyMs`
 * milliseconds: each chunk holds all that has arrived since the last one. A live stream that
 * arrives in small writes (a sound card's 10-20 ms periods) then wakes the analysis a few times a
 * second instead of fifty: most of a quiet station's CPU was spent waking up (issue 14's live
 * bench), and a longer batch costs less per hop (measured with that bench; most likely because
 * code and data stay warm in the processor's caches through a batch). The latency grows by up to
 * `everyMs`.
 *
 * What the descriptor holds while it waits (inputCapacity): a pipe 64 KiB in Linux; a Unix
 * socket (what a parent process such as a supervisor or Node's spawn gives its child as stdin)
 * its sender's buffer, net.core.wmem_default (208 KiB usually), of which we count on half (each
 * write costs the buffer some bytes of bookkeeping beyond its data). The descriptor itself is
 * read more often than `everyMs` when one interval of the stream (`bytesPerSecond`) would fill
 * more than three quarters of that (readInterval), so that a producer is never held up; what
 * those reads bring is kept here until the chunk is due. The descriptor must not block: a pipe
 * or socket made non-blocking (polledStdin), a file, or a terminal (EAGAIN: nothing yet). Ends
 * at end of file (with what was kept), or when `stopped` resolves (a read still pending then is
 * abandoned). Each chunk is a view into one buffer, valid until the next is asked for.
 */
const PIPE_BYTES = 65536;
/** A Unix socket's send buffer when /proc does not say (Linux's usual net.core.wmem_default). */
const SOCKET_BYTES_DEFAULT = 212992;

/** Bytes the descriptor can hold before its writer must wait: see above (64 KiB for anything but a socket). */
export function inputCapacity(fd: number, wmemDefaultFile = '/proc/sys/net/core/wmem_default'): number {
  try {
    if (!fstatSync(fd).isSocket()) return PIPE_BYTES;
  } catch {
    return PIPE_BYTES;
  }
  let sendBuffer = SOCKET_BYTES_DEFAULT;
  try {
    const v = Number(readFileSync(wmemDefaultFile, 'utf8').trim());
    if (Number.isFinite(v) && v > 0) sendBuffer = v;
  } catch {
    // no /proc: the usual size
  }
  return Math.max(PIPE_BYTES, Math.floor(sendBuffer / 2));
}

/** The interval (ms) between reads of the descriptor: `everyMs`, but at most the time that fills three quarters of `capacity` bytes. */
export function readInterval(everyMs: number, bytesPerSecond: number, capacity: number): number {
  return Math.max(1, Math.min(everyMs, (1000 * 0.75 * capacity) / bytesPerSecond));
}

/** A file descriptor read every `everyMs` milliseconds (pollFd) instead of through a Readable. */
export interface PolledInput {
  kind: 'polled';
  fd: number;
  everyMs: number;
}

/**
 * stdin, to be read every `everyMs` milliseconds. process.stdin is created but never read: for a
 * pipe, libuv then puts the descriptor in non-blocking mode, so that a read with nothing waiting
 * returns at once (EAGAIN) instead of waiting in the thread pool, where a stop signal could not
 * end it and it would hold the process open. (A file on stdin never blocks; a terminal is
 * non-blocking too.)
 */
export function polledStdin(everyMs: number): PolledInput {
  void process.stdin;
  return { kind: 'polled', fd: 0, everyMs };
}

export async function* pollFd(fd: number, everyMs: number, bytesPerSecond: number, stopped: Promise<void>): AsyncGenerator<Uint8Array> {
  const capacity = inputCapacity(fd);
  const chunkMs = Math.max(1, everyMs);
  // The reads of one chunk evenly spaced (as few as keep each within readInterval).
  const intervalMs = chunkMs / Math.ceil(chunkMs / readInterval(everyMs, bytesPerSecond, capacity) - 1e-9);
  // Room for one chunk's audio (twice over: a late wake-up) and one more read of the descriptor.
  const buf = Buffer.alloc(capacity + Math.ceil((bytesPerSecond * 2 * Math.max(intervalMs, chunkMs)) / 1000));
  let filled = 0;
  let stop = false;
  // The pending sleep, ended early by a stop (no race against a long-lived promise: its handlers
  // would pile up, one per read, all night).
  let wake: (() => void) | null = null;
  let timer: NodeJS.Timeout | null = null;
  void stopped.then(() => {
    stop = true;
    if (timer) clearTimeout(timer);
    wake?.();
  });
  let due = performance.now();
  let chunkDue = due;
  // Is this read the one the next chunk is due at? (By schedule, not by the clock: a timer may
  // fire a fraction of a millisecond before its time.) The first read hands on what it finds.
  let chunkRead = true;
  while (!stop) {
    const got = readNow(fd, buf, filled);
    if (stop) return;
    if (got === 0) {
      // end of file: what was kept, then the end
      if (filled > 0) yield buf.subarray(0, filled);
      return;
    }
    if (got > 0) filled += got;
    // A chunk when it is due, or when the buffer could not take another full read.
    if (filled > 0 && (chunkRead || buf.length - filled < capacity)) {
      yield buf.subarray(0, filled);
      filled = 0;
    }
    if (chunkRead) chunkDue += chunkMs;
    const now = performance.now();
    if (chunkDue < now) chunkDue = now;
    // The next read one interval after this one was due (a steady pace, not drifting by the work
    // done), and none later than the next chunk.
    due += intervalMs;
    if (due < now) due = now;
    // (within a quarter interval: the sums of the read steps may fall a rounding short of the chunk's time)
    chunkRead = due >= chunkDue - 0.25 * intervalMs;
    if (chunkRead) due = chunkDue;
    // A (nearly) full pipe: the producer is ahead (a backlog, or faster than real time): read
    // again soon, not an interval later.
    const wait = got >= 0.9 * capacity ? 1 : due - now;
    if (wait === 1) due = now;
    await new Promise<void>((r) => {
      wake = r;
      timer = setTimeout(r, wait);
    });
    wake = null;
    timer = null;
  }
}

/**
 * Bytes read (0 at end of file, -1 when the descriptor has nothing yet). A synchronous read: on
 * a non-blocking descriptor it returns at once, and it saves the thread pool's round trip (a
 * second thread woken per read, a quarter of a live station's JavaScript time in a profile).
 */
function readNow(fd: number, buf: Buffer, at: number): number {
  try {
    return readSync(fd, buf, at, buf.length - at, null);
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'EAGAIN') return -1;
    throw err;
  }
}

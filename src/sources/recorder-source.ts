import type { ChildProcess } from 'node:child_process';
import { endianness } from 'node:os';
import lpcm16, { type Recording } from 'node-record-lpcm16';
import { RuntimeFailure, UsageError } from '../util/errors.js';
import type { AudioBlock, AudioSource, WarningSink } from './audio-source.js';
import { FrameAssembler } from './frame-assembler.js';
import type { RecorderOptions } from './recorder-options.js';
import { DEFAULT_RESTART_TIMING, RestartPolicy, type RestartTiming } from './restart-policy.js';
import { stderrWarning } from '../util/stderr-warning.js';
import { checkBlockFrames } from './stream-options.js';

/**
 * Live capture through node-record-lpcm16, which builds the command line of sox, rec or
 * arecord (raw signed 16-bit, the requested rate and channel count) and spawns it. Around
 * it this source adds what an all-night station needs: a stall detector, restarts with
 * exponential back-off, gap reports, a bounded queue, and the wall-clock time of the
 * first sample. See the report in the commit that added it for the package's limits.
 */

/** A hole in the live stream: audio before `atFrame` and after it are not contiguous. */
export interface RecorderGap {
  /** Index (from the start of the stream) of the first frame after the gap. */
  readonly atFrame: number;
  /** What happened, for the log, e.g. "no audio from arecord for 2 s". */
  readonly reason: string;
  /** Seconds until the recorder is started again (0 when it keeps running). */
  readonly retryInS: number;
}

export interface RecorderHooks {
  /** Frames per block (default 4096). */
  blockFrames?: number;
  onGap?: (gap: RecorderGap) => void;
  onWarning?: WarningSink;
  /** Back-off timing; the defaults (0.5 s doubling to 30 s, reset after 60 s healthy) are the design's. */
  timing?: Partial<RecorderTiming>;
}

export interface RecorderTiming extends RestartTiming {
  /** After the recorder exits, wait this long for the rest of its output (1 s). */
  readonly drainGraceS: number;
  /** After SIGTERM, wait this long before SIGKILL (2 s). */
  readonly killGraceS: number;
  /** Audio queued beyond this many seconds (the analysis fell behind) is dropped, as a gap (10 s). */
  readonly maxQueueS: number;
}

const DEFAULT_TIMING: RecorderTiming = { ...DEFAULT_RESTART_TIMING, drainGraceS: 1, killGraceS: 2, maxQueueS: 10 };

export interface RecorderSource extends AudioSource {
  /** Wall-clock time of the first sample (estimated from its arrival), null before it arrives. */
  readonly startedAt: Date | null;
  /**
   * Where the current run of the recorder began: its first frame's index and wall-clock
   * time. The utc of frame f is at + (f - frame) / sampleRate; null before audio arrives.
   */
  readonly segment: { readonly frame: number; readonly at: Date } | null;
  /** Restarts so far. */
  readonly restarts: number;
}

const INSTALL_HINT: Readonly<Record<RecorderOptions['recorder'], string>> = {
  sox: 'apt-get install sox libsox-fmt-alsa',
  rec: 'apt-get install sox libsox-fmt-alsa',
  arecord: 'apt-get install alsa-utils',
};

type Marker = { readonly kind: 'start'; readonly at: Date } | { readonly kind: 'drop'; seconds: number; skipBytes: number };
type QueueItem = Uint8Array | Marker;

/** Spawn the recorder through the package. It ignores `device` for rec, which reads AUDIODEV like sox. */
function spawnRecording(o: RecorderOptions): Recording {
  const options = { recorder: o.recorder, sampleRate: o.sampleRate, channels: o.channels, audioType: 'raw', device: o.device ?? undefined } as const;
  if (o.recorder !== 'rec' || o.device === null) return lpcm16.record(options);
  const saved = process.env.AUDIODEV;
  process.env.AUDIODEV = o.device; // spawn copies the environment synchronously
  try {
    return lpcm16.record(options);
  } finally {
    if (saved === undefined) delete process.env.AUDIODEV;
    else process.env.AUDIODEV = saved;
  }
}

/** One spawned recorder process, from spawn to its end (exit, stall or spawn failure). */
class RecorderRun {
  readonly spawned: Promise<void>;
  readonly exited: Promise<void>;
  private readonly cp: ChildProcess;
  private ended = false;
  private hasExited = false;
  private stdoutClosed = false;
  private lastStderr = '';
  private stallTimer: NodeJS.Timeout | null = null;
  private killTimer: NodeJS.Timeout | null = null;
  private exitReason = '';

  constructor(
    o: RecorderOptions,
    private readonly timing: RecorderTiming,
    onData: (chunk: Uint8Array) => void,
    private readonly onEnd: (reason: string) => void,
  ) {
    const rec = spawnRecording(o);
    this.cp = rec.process;
    const out = rec.stream();
    let resolveSpawn = (): void => {};
    let rejectSpawn = (_: Error): void => {};
    this.spawned = new Promise<void>((res, rej) => {
      resolveSpawn = res;
      rejectSpawn = rej;
    });
    this.spawned.catch(() => {}); // also reported through onEnd
    let resolveExit = (): void => {};
    this.exited = new Promise<void>((res) => (resolveExit = res));

    // The package re-emits a non-zero exit as a string 'error' on stdout; the exit handler below covers it.
    out.on('error', () => {});
    out.on('data', (chunk: Uint8Array) => {
      if (this.ended) return;
      this.stallTimer?.refresh();
      onData(chunk);
    });
    out.on('close', () => {
      this.stdoutClosed = true;
      if (this.hasExited) this.end(this.exitReason);
    });
    this.cp.stderr?.on('data', (chunk: Buffer) => {
      const lines = chunk.toString('utf8').split(/\r?\n/).map((l) => l.trim()).filter((l) => l !== '');
      if (lines.length > 0) this.lastStderr = lines[lines.length - 1]!.slice(0, 200);
    });
    this.cp.once('spawn', () => {
      resolveSpawn();
      this.stallTimer = setTimeout(() => this.end(`no audio from ${o.recorder} for ${o.stallTimeoutS} s`), o.stallTimeoutS * 1000);
    });
    this.cp.once('error', (err: NodeJS.ErrnoException) => {
      const reason = err.code === 'ENOENT' ? `${o.recorder} was not found on PATH` : `${o.recorder} could not be run: ${err.message}`;
      rejectSpawn(Object.assign(new Error(reason), { code: err.code }));
      resolveExit();
      this.end(reason);
    });
    this.cp.once('exit', (code, signal) => {
      this.hasExited = true;
      if (this.killTimer) clearTimeout(this.killTimer);
      resolveExit();
      this.exitReason = signal ? `${o.recorder} was stopped by ${signal}` : `${o.recorder} exited with code ${code}`;
      if (this.stdoutClosed) this.end(this.exitReason);
      else setTimeout(() => this.end(this.exitReason), this.timing.drainGraceS * 1000);
    });
  }

  private end(reason: string): void {
    if (this.ended) return;
    this.ended = true;
    if (this.stallTimer) clearTimeout(this.stallTimer);
    this.kill();
    this.onEnd(this.lastStderr ? `${reason} (${this.lastStderr})` : reason);
  }

  private kill(): void {
    if (this.hasExited || this.cp.exitCode !== null || this.cp.pid === undefined) return;
    this.cp.kill('SIGTERM');
    this.killTimer ??= setTimeout(() => this.cp.kill('SIGKILL'), this.timing.killGraceS * 1000);
  }

  /**
   * Stop without reporting an end; resolves when the process has gone, or shortly after
   * SIGKILL if it cannot go (a process stuck in a broken device driver ignores even that).
   */
  stop(): Promise<void> {
    this.ended = true;
    if (this.stallTimer) clearTimeout(this.stallTimer);
    this.kill();
    let timer: NodeJS.Timeout | undefined;
    const giveUp = new Promise<void>((res) => (timer = setTimeout(res, (this.timing.killGraceS + 1) * 1000)));
    return Promise.race([this.exited, giveUp]).finally(() => clearTimeout(timer));
  }
}

/**
 * Start the recorder and wait until it has been spawned. A recorder that is not installed
 * is a UsageError; one that stops later is restarted (see RecorderHooks), each gap reported
 * through onGap; after more than options.maxRestarts failed restarts in a row, blocks()
 * throws a RuntimeFailure. blocks() may be called once; close() stops the recorder.
 */
export async function openRecorderSource(options: RecorderOptions, hooks: RecorderHooks = {}): Promise<RecorderSource> {
  const blockFrames = checkBlockFrames(hooks.blockFrames);
  const timing: RecorderTiming = { ...DEFAULT_TIMING, ...hooks.timing };
  const warn = hooks.onWarning ?? stderrWarning;
  const onGap = hooks.onGap ?? (() => {});
  const name = options.recorder;
  if (name !== 'arecord' && endianness() !== 'LE') {
    throw new UsageError(`${name} writes raw samples in this machine's big-endian order, which bearline does not read; use --recorder arecord`);
  }
  const assembler = new FrameAssembler('s16', options.channels, blockFrames);
  const frameBytes = assembler.frameBytes;
  const bytesPerSecond = frameBytes * options.sampleRate;
  const maxQueueBytes = Math.ceil(timing.maxQueueS * bytesPerSecond);
  const policy = new RestartPolicy(options.maxRestarts, timing);

  const queue: QueueItem[] = [];
  let queuedBytes = 0;
  let runEnded: string | null = null;
  let run: RecorderRun;
  let runBytes = 0; // bytes received from the current run, dropped ones included
  let runFirstAudio = 0; // Date.now() of the current run's first audio, 0 before it
  let startedAt: Date | null = null;
  let segment: { frame: number; at: Date } | null = null;
  let restarts = 0;
  let framesOut = 0;
  let closed = false;
  let iterating = false;
  let wake: (() => void) | null = null;
  let sleepTimer: NodeJS.Timeout | null = null;

  const notify = (): void => {
    const w = wake;
    wake = null;
    w?.();
  };

  const onData = (chunk: Uint8Array): void => {
    const now = Date.now();
    if (runFirstAudio === 0) {
      runFirstAudio = now;
      const at = new Date(now - (chunk.length / bytesPerSecond) * 1000); // its first sample was captured one chunk ago
      startedAt ??= at;
      queue.push({ kind: 'start', at });
    } else {
      policy.onAudio((now - runFirstAudio) / 1000);
    }
    runBytes += chunk.length;
    queue.push(chunk);
    queuedBytes += chunk.length;
    if (queuedBytes > maxQueueBytes) dropQueued();
    notify();
  };

  /** The analysis fell behind: drop the queued audio, keep one marker in its place. */
  const dropQueued = (): void => {
    const kept = queue.filter((item): item is Marker => !(item instanceof Uint8Array) && item.kind === 'start');
    const seconds = queuedBytes / bytesPerSecond;
    queue.length = 0;
    queue.push(...kept, { kind: 'drop', seconds, skipBytes: (frameBytes - (runBytes % frameBytes)) % frameBytes });
    queuedBytes = 0;
  };

  const startRun = (): RecorderRun => {
    runBytes = 0;
    runFirstAudio = 0;
    return new RecorderRun(options, timing, onData, (reason) => {
      runEnded = reason;
      notify();
    });
  };

  run = startRun();
  try {
    await run.spawned;
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ENOENT') {
      throw new UsageError(`the recorder '${name}' was not found on PATH; install it (${INSTALL_HINT[name]}) or choose another with --recorder (sox, rec, arecord)`);
    }
    throw new UsageError(`the recorder '${name}' could not be started: ${(err as Error).message}`);
  }

  const waitForWork = async (): Promise<void> => {
    if (queue.length > 0 || runEnded !== null || closed) return;
    await new Promise<void>((res) => (wake = res));
  };

  const sleep = async (seconds: number): Promise<void> => {
    await new Promise<void>((res) => {
      wake = res;
      sleepTimer = setTimeout(notify, seconds * 1000);
    });
    if (sleepTimer) clearTimeout(sleepTimer);
  };

  async function* blocks(): AsyncGenerator<AudioBlock> {
    if (iterating) throw new Error('openRecorderSource: blocks() may be called only once');
    iterating = true;
    let skip = 0;
    try {
      while (!closed) {
        await waitForWork();
        while (queue.length > 0 && !closed) {
          const item = queue.shift()!;
          if (item instanceof Uint8Array) {
            queuedBytes -= item.length;
            let at = Math.min(skip, item.length);
            skip -= at;
            while (at < item.length) {
              at = assembler.take(item, at);
              if (assembler.full) {
                const block = assembler.emit();
                framesOut += block.length;
                yield block;
              }
            }
          } else if (item.kind === 'start') {
            assembler.discardPartialFrame();
            skip = 0;
            segment = { frame: framesOut + assembler.heldFrames, at: item.at };
          } else {
            assembler.discardPartialFrame();
            skip = item.skipBytes;
            const lost = `the analysis fell behind the live audio; dropped ${item.seconds.toFixed(1)} s`;
            warn(lost);
            onGap({ atFrame: framesOut + assembler.heldFrames, reason: lost, retryInS: 0 });
          }
        }
        if (closed || runEnded === null || queue.length > 0) continue;
        const reason: string = runEnded;
        runEnded = null;
        assembler.discardPartialFrame();
        const healthyForS = runFirstAudio === 0 ? 0 : (Date.now() - runFirstAudio) / 1000;
        const decision = policy.onRunEnded(healthyForS);
        if (decision.giveUp) {
          if (assembler.heldFrames > 0) {
            const block = assembler.emit();
            framesOut += block.length;
            yield block;
          }
          throw new RuntimeFailure(`the recorder ${name} failed ${decision.failures} times in a row (last: ${reason}); giving up, check the device and its cable`);
        }
        warn(`${reason}; restarting ${name} in ${decision.retryInS} s`);
        onGap({ atFrame: framesOut + assembler.heldFrames, reason, retryInS: decision.retryInS });
        await sleep(decision.retryInS);
        if (closed) break;
        restarts += 1;
        run = startRun();
      }
    } finally {
      await close();
    }
  }

  let closing: Promise<void> | null = null;
  function close(): Promise<void> {
    closing ??= (async () => {
      closed = true;
      if (sleepTimer) clearTimeout(sleepTimer);
      notify();
      await run.stop();
    })();
    return closing;
  }

  return {
    format: { sampleRate: options.sampleRate, channels: options.channels, totalFrames: null },
    blocks,
    close,
    get startedAt() {
      return startedAt;
    },
    get segment() {
      return segment;
    },
    get restarts() {
      return restarts;
    },
  };
}

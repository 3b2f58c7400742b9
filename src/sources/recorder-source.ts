import type { ChildProcess } from 'node:child_process';
import { endianness } from 'node:os';
import lpcm16, { type Recording } from 'node-record-lpcm16';
import { RuntimeFailure, UsageError } from '../util/errors.js';
import type { AudioBlock, AudioSource, StreamGap, WarningSink } from './audio-source.js';
import { FrameAssembler } from './frame-assembler.js';
import type { RecorderOptions } from './recorder-options.js';
import { DEFAULT_RESTART_TIMING, RestartPolicy, type RestartTiming } from './restart-policy.js';
import { stderrWarning } from '../util/stderr-warning.js';
import { StreamClock } from './stream-clock.js';
import { checkBlockFrames } from './stream-options.js';

/**
 * Live capture through node-record-lpcm16, which builds the command line of sox, rec or
 * arecord (raw signed 16-bit, the requested rate and channel count) and spawns it. Around
 * it this source adds what an all-night station needs: a stall detector, restarts with
 * exponential back-off, a bounded queue, and live stream time on every block, with the holes
 * (restarts, a dropped backlog) marked on the block after them. See the report in the commit
 * that added it for the package's limits.
 */

export interface RecorderHooks {
  /** Frames per block (default 4096). */
  blockFrames?: number;
  onWarning?: WarningSink;
  /** Back-off timing; the defaults (0.5 s doubling to 30 s, reset after 60 s healthy) are the design's. */
  timing?: Partial<RecorderTiming>;
  /** Milliseconds since the epoch (default Date.now): when audio arrives. */
  clock?: () => number;
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
  /** Restarts so far. */
  readonly restarts: number;
}

const INSTALL_HINT: Readonly<Record<RecorderOptions['recorder'], string>> = {
  sox: 'apt-get install sox libsox-fmt-alsa',
  rec: 'apt-get install sox libsox-fmt-alsa',
  arecord: 'apt-get install alsa-utils',
};

/** A run of the recorder began, its first sample captured at `atMs`; or queued audio was dropped. */
type Marker = { readonly kind: 'start'; readonly atMs: number } | { readonly kind: 'drop'; seconds: number; skipBytes: number };
type QueueItem = Uint8Array | Marker;

/**
 * What the recorder's output becomes until the analysis asks for it: its chunks, and a marker
 * where each run begins. Bounded: beyond maxBytes (the analysis fell behind) the queued audio
 * is dropped and a marker says how much.
 */
class CaptureQueue {
  private readonly items: QueueItem[] = [];
  private bytes = 0;
  /** Bytes received from the current run, dropped ones included. */
  private runBytes = 0;
  /** Wall-clock ms of the current run's first audio, 0 before it. */
  private runFirstAudio = 0;

  constructor(
    private readonly frameBytes: number,
    private readonly bytesPerSecond: number,
    private readonly maxBytes: number,
    private readonly policy: RestartPolicy,
  ) {}

  get length(): number {
    return this.items.length;
  }

  /** A new run of the recorder is starting. */
  newRun(): void {
    this.runBytes = 0;
    this.runFirstAudio = 0;
  }

  /** Seconds the current run has delivered audio for (0 before any). */
  healthyForS(nowMs: number): number {
    return this.runFirstAudio === 0 ? 0 : (nowMs - this.runFirstAudio) / 1000;
  }

  push(chunk: Uint8Array, nowMs: number): void {
    if (this.runFirstAudio === 0) {
      this.runFirstAudio = nowMs;
      // its first sample was captured one chunk ago
      this.items.push({ kind: 'start', atMs: nowMs - (chunk.length / this.bytesPerSecond) * 1000 });
    } else {
      this.policy.onAudio(this.healthyForS(nowMs));
    }
    this.runBytes += chunk.length;
    this.items.push(chunk);
    this.bytes += chunk.length;
    if (this.bytes > this.maxBytes) this.dropQueued();
  }

  shift(): QueueItem | undefined {
    const item = this.items.shift();
    if (item instanceof Uint8Array) this.bytes -= item.length;
    return item;
  }

  /** The analysis fell behind: drop the queued audio, keep one marker in its place (and the run markers). */
  private dropQueued(): void {
    const kept = this.items.filter((item): item is Marker => !(item instanceof Uint8Array) && item.kind === 'start');
    const seconds = this.bytes / this.bytesPerSecond;
    this.items.length = 0;
    this.items.push(...kept, { kind: 'drop', seconds, skipBytes: (this.frameBytes - (this.runBytes % this.frameBytes)) % this.frameBytes });
    this.bytes = 0;
  }
}

function droppedReason(seconds: number): string {
  return `the analysis fell behind the live audio; dropped ${seconds.toFixed(1)} s`;
}

/**
 * Live stream time of the blocks (stream-clock.ts): each block is stamped with its stream
 * time, and the first block after a hole carries the hole.
 */
class BlockStamper {
  private readonly clock: StreamClock;
  /** A run ended here (stream time) for this reason; the hole is known when the next run begins. */
  private pending: { reason: string; fromS: number } | null = null;
  private gap: StreamGap | null = null;

  constructor(private readonly rate: number) {
    this.clock = new StreamClock(rate);
  }

  /**
   * The recorder stopped after `frame` frames were delivered. A run that ends before any audio
   * ever arrived starts the clock at `spawnedAtMs` (the wall clock when it was started), so the
   * hole is timed from then and its record carries a real utc (never the epoch).
   */
  runEnded(frame: number, reason: string, spawnedAtMs: number): void {
    if (!this.clock.started) this.clock.beginRun(0, spawnedAtMs);
    this.pending = { reason, fromS: this.clock.streamTime(frame / this.rate) };
  }

  /** A run begins at frame `frame`, its first sample captured at `atMs`. */
  runStarted(frame: number, atMs: number): void {
    const lostS = this.clock.beginRun(frame, atMs);
    if (this.pending) this.gap = { ...this.pending, lostS };
    this.pending = null;
  }

  /** Queued audio after frame `frame` was dropped (drops with no audio between them make one hole). */
  dropped(frame: number, seconds: number): void {
    const fromS = this.gap?.fromS ?? this.clock.streamTime(frame / this.rate);
    const lostS = (this.gap?.lostS ?? 0) + seconds;
    this.gap = { reason: droppedReason(lostS), fromS, lostS };
    this.clock.lose(seconds);
  }

  /** `block` (whose first frame is frame `frame`) with its time, and the hole before it if there was one. */
  stamp(block: AudioBlock, frame: number): AudioBlock {
    const time = { startS: this.clock.streamTime(frame / this.rate), epochMs: this.clock.epochMs, ...(this.gap ? { gapBefore: this.gap } : {}) };
    this.gap = null;
    return { channels: block.channels, length: block.length, time };
  }
}

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
 * is a UsageError; one that stops later is restarted (see RecorderHooks), and the first block
 * after each hole carries it (block.time.gapBefore); after more than options.maxRestarts failed
 * restarts in a row, blocks() throws a RuntimeFailure. Every block carries its live stream time.
 * blocks() may be called once; close() stops the recorder.
 */
export async function openRecorderSource(options: RecorderOptions, hooks: RecorderHooks = {}): Promise<RecorderSource> {
  const blockFrames = checkBlockFrames(hooks.blockFrames);
  const timing: RecorderTiming = { ...DEFAULT_TIMING, ...hooks.timing };
  const warn = hooks.onWarning ?? stderrWarning;
  const now = hooks.clock ?? Date.now;
  const name = options.recorder;
  if (name !== 'arecord' && endianness() !== 'LE') {
    throw new UsageError(`${name} writes raw samples in this machine's big-endian order, which bearline does not read; use --recorder arecord`);
  }
  const assembler = new FrameAssembler('s16', options.channels, blockFrames);
  const bytesPerSecond = assembler.frameBytes * options.sampleRate;
  const policy = new RestartPolicy(options.maxRestarts, timing);
  const queue = new CaptureQueue(assembler.frameBytes, bytesPerSecond, Math.ceil(timing.maxQueueS * bytesPerSecond), policy);
  const stamper = new BlockStamper(options.sampleRate);

  let runEnded: string | null = null;
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
  let runSpawnedAtMs = 0;
  const startRun = (): RecorderRun => {
    runSpawnedAtMs = now();
    queue.newRun();
    return new RecorderRun(
      options,
      timing,
      (chunk) => {
        queue.push(chunk, now());
        notify();
      },
      (reason) => {
        runEnded = reason;
        notify();
      },
    );
  };

  let run = startRun();
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
  /** The assembled block, stamped; framesOut counts it. */
  const emit = (): AudioBlock => {
    const first = framesOut;
    const block = assembler.emit();
    framesOut += block.length;
    return stamper.stamp(block, first);
  };

  /** The blocks of the queued chunks and markers, until the queue is empty. */
  /** Bytes still to skip to the next frame boundary after a drop (kept across calls: the queue may empty first). */
  let skip = 0;
  async function* drainQueue(): AsyncGenerator<AudioBlock> {
    while (queue.length > 0 && !closed) {
      const item = queue.shift()!;
      if (item instanceof Uint8Array) {
        let at = Math.min(skip, item.length);
        skip -= at;
        while (at < item.length) {
          at = assembler.take(item, at);
          if (assembler.full) yield emit();
        }
      } else {
        // The frames before a marker go out on their own, so that a hole falls between blocks.
        assembler.discardPartialFrame();
        if (assembler.heldFrames > 0) yield emit();
        if (item.kind === 'start') {
          skip = 0;
          stamper.runStarted(framesOut, item.atMs);
        } else {
          skip = item.skipBytes;
          warn(droppedReason(item.seconds));
          stamper.dropped(framesOut, item.seconds);
        }
      }
    }
  }

  async function* blocks(): AsyncGenerator<AudioBlock> {
    if (iterating) throw new Error('openRecorderSource: blocks() may be called only once');
    iterating = true;
    try {
      while (!closed) {
        await waitForWork();
        yield* drainQueue();
        if (closed || runEnded === null || queue.length > 0) continue;
        const reason: string = runEnded;
        runEnded = null;
        assembler.discardPartialFrame();
        if (assembler.heldFrames > 0) yield emit();
        const decision = policy.onRunEnded(queue.healthyForS(now()));
        if (decision.giveUp) {
          throw new RuntimeFailure(`the recorder ${name} failed ${decision.failures} times in a row (last: ${reason}); giving up, check the device and its cable`);
        }
        warn(`${reason}; restarting ${name} in ${decision.retryInS} s`);
        stamper.runEnded(framesOut, reason, runSpawnedAtMs);
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
    get restarts() {
      return restarts;
    },
  };
}

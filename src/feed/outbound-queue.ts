/**
 * The messages waiting for one viewer. Frames are many and each supersedes the last, so
 * beyond `frameBound` the oldest waiting frame is dropped (and counted). Events and gaps are
 * kept: they are few and each is a record the viewer must not miss. At most one status
 * message waits: a newer one replaces it. Pure: no I/O, no clocks.
 */
export type MessageKind = 'frame' | 'keep' | 'status';

interface Entry {
  kind: MessageKind;
  text: string;
}

export class OutboundQueue {
  private entries: Entry[] = [];
  private frames = 0;
  private droppedTotal = 0;

  constructor(readonly frameBound: number) {}

  /** Add a message at the back; returns how many frames this push dropped (0 or 1). */
  push(kind: MessageKind, text: string): number {
    if (kind === 'status') {
      const waiting = this.entries.find((e) => e.kind === 'status');
      if (waiting) {
        waiting.text = text;
        return 0;
      }
    }
    this.entries.push({ kind, text });
    if (kind !== 'frame') return 0;
    this.frames++;
    if (this.frames <= this.frameBound) return 0;
    const oldest = this.entries.findIndex((e) => e.kind === 'frame');
    this.entries.splice(oldest, 1);
    this.frames--;
    this.droppedTotal++;
    return 1;
  }

  /** Take the message at the front, or undefined when none waits. */
  shift(): string | undefined {
    const e = this.entries.shift();
    if (e === undefined) return undefined;
    if (e.kind === 'frame') this.frames--;
    return e.text;
  }

  get length(): number {
    return this.entries.length;
  }

  /** Frames waiting (never more than frameBound). */
  get framesWaiting(): number {
    return this.frames;
  }

  /** Events, gaps and status waiting (never dropped). */
  get keptWaiting(): number {
    return this.entries.length - this.frames;
  }

  /** Frames dropped since the queue was made. */
  get dropped(): number {
    return this.droppedTotal;
  }

  /** Total characters waiting (for stats: what a slow viewer costs in memory). */
  get chars(): number {
    let n = 0;
    for (const e of this.entries) n += e.text.length;
    return n;
  }
}

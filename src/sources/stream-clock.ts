/**
 * Stream time and UTC for a live stream that can lose audio (a recorder restart, an overrun).
 * Live records keep `time_s` in step with the wall clock: after a hole, stream time jumps
 * by the seconds lost, so `utc` = start of the stream + time_s, and the tracker sees the
 * time that really passed. Pure: the caller passes every clock reading.
 */
export class StreamClock {
  private startMs: number | null = null;
  private offsetS = 0;

  constructor(readonly sampleRate: number) {}

  /** True once the first run of audio has begun. */
  get started(): boolean {
    return this.startMs !== null;
  }

  /** Seconds added to audio time so far (the sum of the holes). */
  get lostS(): number {
    return this.offsetS;
  }

  /**
   * A run of contiguous audio begins at audio frame `frame` (frames delivered so far), its
   * first sample captured at `atMs` (ms since the epoch). Returns the seconds lost before it:
   * 0 for the first run, and 0 when the clock readings say no time went missing (a
   * recorder that delivers faster than real time).
   */
  beginRun(frame: number, atMs: number): number {
    const audioS = frame / this.sampleRate;
    if (this.startMs === null) {
      this.startMs = atMs - audioS * 1000;
      return 0;
    }
    const lost = (atMs - this.startMs) / 1000 - audioS - this.offsetS;
    if (!(lost > 0)) return 0;
    this.offsetS += lost;
    return lost;
  }

  /** Audio known to be lost without a new run (a dropped backlog): stream time jumps by it. */
  lose(seconds: number): void {
    if (seconds > 0) this.offsetS += seconds;
  }

  /** Wall-clock time (ms since the epoch) of stream time 0; 0 before the first run. */
  get epochMs(): number {
    return this.startMs ?? 0;
  }

  /** Stream time (seconds) of an audio time (seconds of audio delivered). */
  streamTime(audioS: number): number {
    return audioS + this.offsetS;
  }

  /** ISO 8601 UTC of a stream time; the epoch itself before the first run (never used then). */
  utcAt(timeS: number): string {
    return new Date((this.startMs ?? 0) + timeS * 1000).toISOString();
  }
}

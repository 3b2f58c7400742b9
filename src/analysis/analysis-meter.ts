/**
 * How fast the per-hop path (analysis, then tracking and records in the hop's handler) runs on
 * the machine it runs on: the wall time spent in it against the audio it covered. The driver
 * (runAnalysis, ./analysis.ts) reads the clock around each hop; the cores read none.
 */
export class AnalysisMeter {
  hops = 0;
  /** Wall time spent in the per-hop path, ms. */
  busyMs = 0;

  constructor(
    /** Seconds of audio per hop (hop / sample rate). */
    readonly hopS: number,
    private readonly clock: () => number = () => performance.now(),
  ) {}

  /** Call before a hop; hand the value to stop(). */
  start(): number {
    return this.clock();
  }

  stop(startMs: number): void {
    this.busyMs += this.clock() - startMs;
    this.hops++;
  }

  /** Seconds of audio analysed. */
  get audioS(): number {
    return this.hops * this.hopS;
  }

  /** Seconds of audio per second of work: 100 = a hundred times faster than real time; null before any hop. */
  realTimeFactor(): number | null {
    return this.hops > 0 && this.busyMs > 0 ? this.audioS / (this.busyMs / 1000) : null;
  }
}

/** "412x real time" (whole numbers from 10x up), or null. */
export function formatRealTimeFactor(factor: number | null): string | null {
  if (factor === null || !Number.isFinite(factor)) return null;
  return `${factor >= 10 ? factor.toFixed(0) : factor.toFixed(1)}x real time`;
}

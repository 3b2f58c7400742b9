/**
 * When to restart a live recorder that stopped: exponential back-off and the give-up count.
 * Pure: the caller passes the times; nothing here reads a clock.
 */
export interface RestartTiming {
  /** Wait before the first restart, seconds (0.5). */
  readonly firstRetryS: number;
  /** The wait doubles up to this many seconds (30). */
  readonly maxRetryS: number;
  /** A run that delivered audio this long (60 s) counts as healthy: back-off and failure count start over. */
  readonly healthyAfterS: number;
}

export const DEFAULT_RESTART_TIMING: RestartTiming = { firstRetryS: 0.5, maxRetryS: 30, healthyAfterS: 60 };

export type RestartDecision = { readonly giveUp: false; readonly retryInS: number } | { readonly giveUp: true; readonly failures: number };

export class RestartPolicy {
  private failures = 0;

  /** `maxRestarts` null = never give up. */
  constructor(
    private readonly maxRestarts: number | null,
    private readonly timing: RestartTiming = DEFAULT_RESTART_TIMING,
  ) {}

  /** Failed restarts in a row so far. */
  get consecutiveFailures(): number {
    return this.failures;
  }

  /** A run ended after delivering audio for `healthyForS` seconds (0 if none): restart, or give up? */
  onRunEnded(healthyForS: number): RestartDecision {
    if (healthyForS >= this.timing.healthyAfterS) this.failures = 0;
    this.failures += 1;
    if (this.maxRestarts !== null && this.failures > this.maxRestarts) return { giveUp: true, failures: this.failures };
    const retryInS = Math.min(this.timing.maxRetryS, this.timing.firstRetryS * 2 ** (this.failures - 1));
    return { giveUp: false, retryInS };
  }

  /** A run has been delivering audio for `healthyForS` seconds (called as audio arrives). */
  onAudio(healthyForS: number): void {
    if (healthyForS >= this.timing.healthyAfterS) this.failures = 0;
  }
}

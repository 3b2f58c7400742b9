import type { WarningSink } from './audio-source.js';
import { MAX_FLOAT_SAMPLE, noReplacedSamples, type ReplacedSamples } from './pcm-decode.js';

/** The samples of a stream that were replaced with 0 (see pcm-decode.ts), in all. */
export interface ReplacedSampleCount {
  readonly count: number;
  /** Stream time of the first replaced sample, seconds (null when none was). */
  readonly firstTimeS: number | null;
}

function describe(v: number): string {
  if (Number.isNaN(v)) return 'NaN (not a number)';
  if (v === Infinity) return '+Inf';
  if (v === -Infinity) return '-Inf';
  return `${v.toPrecision(3)}, beyond +-${MAX_FLOAT_SAMPLE} (60 dB over full scale)`;
}

const KINDS = `NaN, infinite or beyond +-${MAX_FLOAT_SAMPLE}`;

/**
 * Says once, on the first one, that a stream held samples that are not sound, with the stream
 * time; counts the rest and says the total when the stream ends. A decoder fills `scratch`
 * (deinterleave's out-parameter) and the source calls note() with the block's first frame.
 */
export class ReplacedSamplesReport {
  readonly scratch: ReplacedSamples = noReplacedSamples();
  private total = 0;
  private firstTimeS: number | null = null;

  constructor(
    private readonly where: string,
    private readonly sampleRate: number,
    private readonly warn: WarningSink,
  ) {}

  /** Take the counts of the last decode, of a block whose first frame is stream frame `atFrame`. */
  note(atFrame: number): void {
    const r = this.scratch;
    if (r.count === 0) return;
    if (this.total === 0) {
      this.firstTimeS = (atFrame + r.firstFrame) / this.sampleRate;
      this.warn(
        `${this.where}: a sample at ${this.firstTimeS.toFixed(4)} s is ${describe(r.firstValue)}, which is not sound; ` +
          'it is replaced with 0 and the analysis goes on (any more are counted and the total is given at the end)',
      );
    }
    this.total += r.count;
  }

  /** At the end of the stream: the total, when there was more than the one already reported. */
  finish(): void {
    if (this.total > 1) this.warn(`${this.where}: ${this.total} samples in all were ${KINDS} and were replaced with 0 (the first at ${this.firstTimeS!.toFixed(4)} s)`);
  }

  get counted(): ReplacedSampleCount {
    return { count: this.total, firstTimeS: this.firstTimeS };
  }
}

/** One line for a run's summary, or null when nothing was replaced. */
export function replacedSamplesLine(where: string, c: ReplacedSampleCount): string | null {
  if (c.count === 0) return null;
  return `${where}: ${c.count} sample${c.count === 1 ? ' was' : 's were'} ${KINDS} and replaced with 0 (the first at ${c.firstTimeS!.toFixed(4)} s)`;
}

/**
 * Frequency bands for band voting: `count` bands, log-spaced between minHz and maxHz,
 * as half-open bin ranges [start, end) of an n-point spectrum at `sampleRate`.
 */
export interface BandLayout {
  readonly count: number;
  /** First bin of each band. */
  readonly start: Int32Array;
  /** One past the last bin of each band. */
  readonly end: Int32Array;
  readonly loHz: Float64Array;
  readonly hiHz: Float64Array;
  /** Each band's centre, the geometric mean of loHz and hiHz. */
  readonly centreHz: Float64Array;
  /** First and one-past-last bin of all bands together. */
  readonly firstBin: number;
  readonly endBin: number;
}

export function makeBands(n: number, sampleRate: number, minHz: number, maxHz: number, count: number): BandLayout {
  const binHz = sampleRate / n;
  const nyquistBin = n / 2;
  const kLo = Math.max(1, Math.round(minHz / binHz));
  const kHi = Math.min(nyquistBin, Math.max(kLo + count, Math.round(maxHz / binHz) + 1));
  const start = new Int32Array(count);
  const end = new Int32Array(count);
  const loHz = new Float64Array(count);
  const hiHz = new Float64Array(count);
  const ratio = kHi / kLo;
  let prev = kLo;
  for (let b = 0; b < count; b++) {
    let e = b === count - 1 ? kHi : Math.round(kLo * Math.pow(ratio, (b + 1) / count));
    // every band holds at least one bin
    e = Math.max(e, prev + 1);
    e = Math.min(e, kHi - (count - 1 - b));
    start[b] = prev;
    end[b] = e;
    loHz[b] = prev * binHz;
    hiHz[b] = e * binHz;
    prev = e;
  }
  const centreHz = Float64Array.from(loHz, (lo, b) => Math.sqrt(lo * hiHz[b]!));
  return { count, start, end, loHz, hiHz, centreHz, firstBin: kLo, endBin: kHi };
}

/** The top of the audio band (Hz): above it lie ultrasonic calls (bats), with their own direction grid (src/direction/srp-search.ts) and hints (src/track/tracking-session.ts). */
export const AUDIO_TOP_HZ = 20000;

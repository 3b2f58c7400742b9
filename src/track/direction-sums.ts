/**
 * Running weighted sums of a set of directions, one set per slot, in typed arrays: the
 * weighted circular mean and circular standard deviation of the azimuths (Mardia and Jupp
 * 2000), or, on an array whose mirror flips azimuth (a pair, a line, an upright plane), the
 * weighted arithmetic mean and standard deviation of the folded offsets from the reported half
 * circle's centre, which live on [-90, 90] and do not wrap (the mean is turned back into an
 * azimuth on the reported side); plus the weighted mean elevation, and the drift: the weighted
 * least-squares slope of the (unwrapped) working angle over time (a straight-line fit, common
 * practice, no source).
 */
import type { ArrayMirror } from '../geometry/array-mirror.js';
import { meanFromSums, resultantFromSums, stdFromResultantDeg, wrapDeg } from './circular.js';
import { CONFIDENCE, MIN_WEIGHT, TIME, type HopScratch } from './hop-scratch.js';

const DEG = Math.PI / 180;

export class DirectionSums {
  private readonly sumCos: Float64Array;
  private readonly sumSin: Float64Array;
  private readonly sumW: Float64Array;
  private readonly sumLin: Float64Array;
  private readonly sumLin2: Float64Array;
  private readonly sumEl: Float64Array;
  private readonly sumElW: Float64Array;
  private readonly sumEl2: Float64Array;
  private readonly sumLogHz: Float64Array;
  private readonly sumLogHz2: Float64Array;
  private readonly nLogHz: Float64Array;
  /** Drift sums: time from the first direction (t), unwrapped working angle (a). */
  private readonly t0: Float64Array;
  private readonly lastRaw: Float64Array;
  private readonly lastUnwrapped: Float64Array;
  private readonly sumT: Float64Array;
  private readonly sumTT: Float64Array;
  private readonly sumA: Float64Array;
  private readonly sumTA: Float64Array;
  /** The sums that two slots' directions add into plainly (merge); the drift's need moving first. */
  private readonly plainSums: readonly Float64Array[];
  private readonly mirrored: boolean;
  /** Centre of the reported half circle, degrees (0 when not mirrored). */
  private readonly sideDeg: number;

  constructor(
    size: number,
    mirror: ArrayMirror | null,
    private readonly scratch: HopScratch,
  ) {
    this.mirrored = mirror !== null && mirror.sideDeg !== null;
    this.sideDeg = mirror?.sideDeg ?? 0;
    this.sumCos = new Float64Array(size);
    this.sumSin = new Float64Array(size);
    this.sumW = new Float64Array(size);
    this.sumLin = new Float64Array(size);
    this.sumLin2 = new Float64Array(size);
    this.sumEl = new Float64Array(size);
    this.sumElW = new Float64Array(size);
    this.sumEl2 = new Float64Array(size);
    this.sumLogHz = new Float64Array(size);
    this.sumLogHz2 = new Float64Array(size);
    this.nLogHz = new Float64Array(size);
    this.t0 = new Float64Array(size);
    this.lastRaw = new Float64Array(size);
    this.lastUnwrapped = new Float64Array(size);
    this.sumT = new Float64Array(size);
    this.sumTT = new Float64Array(size);
    this.sumA = new Float64Array(size);
    this.sumTA = new Float64Array(size);
    this.plainSums = [this.sumCos, this.sumSin, this.sumW, this.sumLin, this.sumLin2, this.sumEl, this.sumElW, this.sumEl2, this.sumLogHz, this.sumLogHz2, this.nLogHz];
  }

  reset(slot: number): void {
    this.sumCos[slot] = 0;
    this.sumSin[slot] = 0;
    this.sumW[slot] = 0;
    this.sumLin[slot] = 0;
    this.sumLin2[slot] = 0;
    this.sumEl[slot] = 0;
    this.sumElW[slot] = 0;
    this.sumEl2[slot] = 0;
    this.sumLogHz[slot] = 0;
    this.sumLogHz2[slot] = 0;
    this.nLogHz[slot] = 0;
    this.sumT[slot] = 0;
    this.sumTT[slot] = 0;
    this.sumA[slot] = 0;
    this.sumTA[slot] = 0;
  }

  /**
   * Add the directions of slot `from` (the older) to slot `into` (whose first direction came
   * after from's last): into's drift sums are moved to from's first time and its unwrapped
   * angle to from's turn of the circle. `from` is left as it was.
   */
  merge(from: number, into: number): void {
    const wf = this.sumW[from]!;
    if (!(wf > 0)) return;
    const wi = this.sumW[into]!;
    if (wi > 0) {
      const dt = this.t0[into]! - this.t0[from]!;
      const turn = this.mirrored ? 0 : 360 * Math.round((this.lastUnwrapped[from]! - this.sumA[into]! / wi) / 360);
      const st = this.sumT[into]!;
      const sa = this.sumA[into]!;
      this.sumTA[into] = this.sumTA[into]! + turn * st + dt * sa + dt * turn * wi + this.sumTA[from]!;
      this.sumTT[into] = this.sumTT[into]! + 2 * dt * st + dt * dt * wi + this.sumTT[from]!;
      this.sumT[into] = st + dt * wi + this.sumT[from]!;
      this.sumA[into] = sa + turn * wi + this.sumA[from]!;
      this.lastUnwrapped[into] = this.lastUnwrapped[into]! + turn;
    } else {
      this.sumTA[into] = this.sumTA[from]!;
      this.sumTT[into] = this.sumTT[from]!;
      this.sumT[into] = this.sumT[from]!;
      this.sumA[into] = this.sumA[from]!;
      this.lastUnwrapped[into] = this.lastUnwrapped[from]!;
      this.lastRaw[into] = this.lastRaw[from]!;
    }
    this.t0[into] = this.t0[from]!;
    for (const a of this.plainSums) a[into] = a[into]! + a[from]!;
  }

  /** Add candidate j of the current hop, weighted by hop confidence x its score. */
  add(slot: number, j: number): void {
    const sc = this.scratch;
    const azimuthDeg = sc.candAz[j]!;
    const elevationDeg = sc.candEl[j]!;
    const w = Math.max(sc.hop[CONFIDENCE]! * sc.candScore[j]!, MIN_WEIGHT);
    // The drift's angle is unwrapped step by step (successive directions of one track are near).
    if (this.sumW[slot] === 0) {
      this.t0[slot] = sc.hop[TIME]!;
      this.lastUnwrapped[slot] = azimuthDeg;
    } else {
      const step = azimuthDeg - this.lastRaw[slot]!;
      this.lastUnwrapped[slot] = this.lastUnwrapped[slot]! + (this.mirrored ? step : wrapDeg(step));
    }
    this.lastRaw[slot] = azimuthDeg;
    const t = sc.hop[TIME]! - this.t0[slot]!;
    const a = this.lastUnwrapped[slot]!;
    this.sumT[slot] = this.sumT[slot]! + w * t;
    this.sumTT[slot] = this.sumTT[slot]! + w * t * t;
    this.sumA[slot] = this.sumA[slot]! + w * a;
    this.sumTA[slot] = this.sumTA[slot]! + w * t * a;
    this.sumCos[slot] = this.sumCos[slot]! + w * Math.cos(azimuthDeg * DEG);
    this.sumSin[slot] = this.sumSin[slot]! + w * Math.sin(azimuthDeg * DEG);
    this.sumW[slot] = this.sumW[slot]! + w;
    this.sumLin[slot] = this.sumLin[slot]! + w * azimuthDeg;
    this.sumLin2[slot] = this.sumLin2[slot]! + w * azimuthDeg * azimuthDeg;
    const logHz = sc.candLogHz[j]!;
    if (logHz === logHz) {
      this.sumLogHz[slot] = this.sumLogHz[slot]! + logHz;
      this.sumLogHz2[slot] = this.sumLogHz2[slot]! + logHz * logHz;
      this.nLogHz[slot] = this.nLogHz[slot]! + 1;
    }
    if (elevationDeg === elevationDeg) {
      this.sumEl[slot] = this.sumEl[slot]! + w * elevationDeg;
      this.sumElW[slot] = this.sumElW[slot]! + w;
      this.sumEl2[slot] = this.sumEl2[slot]! + w * elevationDeg * elevationDeg;
    }
  }

  meanAzimuthDeg(slot: number): number {
    if (this.mirrored) return this.sumW[slot]! > 0 ? wrapDeg(this.sideDeg + this.sumLin[slot]! / this.sumW[slot]!) : NaN;
    return meanFromSums(this.sumCos[slot]!, this.sumSin[slot]!);
  }

  /**
   * The mean in the tracker's working angle (the candidates' domain): the circular mean
   * azimuth, or on a mirrored array the mean folded offset from the reported side's centre.
   */
  meanWorkingDeg(slot: number): number {
    if (this.mirrored) return this.sumW[slot]! > 0 ? this.sumLin[slot]! / this.sumW[slot]! : NaN;
    return meanFromSums(this.sumCos[slot]!, this.sumSin[slot]!);
  }

  spreadDeg(slot: number): number {
    const w = this.sumW[slot]!;
    if (this.mirrored) {
      return w > 0 ? stdFromSums(this.sumLin[slot]!, this.sumLin2[slot]!, w) : Infinity;
    }
    return stdFromResultantDeg(resultantFromSums(this.sumCos[slot]!, this.sumSin[slot]!, w));
  }

  /** The drift, deg/s: the fitted slope of the working angle over the slot's lifetime (NaN before two distinct times). */
  driftDegS(slot: number): number {
    const w = this.sumW[slot]!;
    const st = this.sumT[slot]!;
    const den = w * this.sumTT[slot]! - st * st;
    return den > 0 ? (w * this.sumTA[slot]! - st * this.sumA[slot]!) / den : NaN;
  }

  /** Weighted standard deviation of the elevations, degrees, or NaN when none carried one. */
  elevationSpreadDeg(slot: number): number {
    const w = this.sumElW[slot]!;
    return w > 0 ? stdFromSums(this.sumEl[slot]!, this.sumEl2[slot]!, w) : NaN;
  }

  /** Standard deviation of the log2 centre frequencies of the slot's lone hops (NaN with fewer than two). */
  spreadLogHz(slot: number): number {
    const n = this.nLogHz[slot]!;
    return n > 1 ? stdFromSums(this.sumLogHz[slot]!, this.sumLogHz2[slot]!, n) : NaN;
  }

  /** Mean log2 centre frequency of the hops that carried one (NaN when fewer than minHops did). */
  meanLogHz(slot: number, minHops: number): number {
    const n = this.nLogHz[slot]!;
    return n >= minHops && n > 0 ? this.sumLogHz[slot]! / n : NaN;
  }

  /** Weighted mean elevation, or null when no direction carried one. */
  meanElevationDeg(slot: number): number | null {
    const w = this.sumElW[slot]!;
    return w > 0 ? this.sumEl[slot]! / w : null;
  }
}

/** Standard deviation from the sums of weights w, of w x and of w x^2 (w > 0; rounding kept from going negative). */
function stdFromSums(sum: number, sum2: number, w: number): number {
  const mean = sum / w;
  return Math.sqrt(Math.max(0, sum2 / w - mean * mean));
}

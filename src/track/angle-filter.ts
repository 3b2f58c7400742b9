/**
 * A bank of Kalman filters, one per track slot, on one angle and its rate (a nearly constant
 * rate model whose rate relaxes to zero with a time constant). State and covariance live in
 * typed arrays sized once, so predicting and updating allocate nothing.
 *
 * The domain decides what "near" means:
 * - 'circle': azimuth in (-180, 180]; innovations are taken the short way round, so 179 and
 *   -179 are 2 degrees apart (wrap-around at the seam).
 * - 'half-circle': azimuth of a two-mic pair in [-90, 90]; a source moving past +-90 (endfire)
 *   comes back as its mirror image, so the state reflects there (angle -> +-180 - angle, rate
 *   negated) and +90 and -90 are 180 degrees apart, never neighbours through 180.
 * - 'elevation': [-90, 90], clamped at the poles (the rate stops there).
 *
 * Model (common practice, no source; any estimation text): x = [angle, rate],
 * F = [[1, dt], [0, a]], a = exp(-dt / rateMemory), Q = q [[dt^3/3, dt^2/2], [dt^2/2, dt]]
 * with q = rateWander^2 (continuous white noise on the rate).
 */
import { wrapDeg } from './circular.js';

export type AngleDomain = 'circle' | 'half-circle' | 'elevation';

export interface AngleFilterParams {
  rateWanderDegS: number;
  maxRateDegS: number;
  rateMemoryS: number;
  maxUncertaintyDeg: number;
}

export class AngleFilterBank {
  readonly angle: Float64Array;
  readonly rate: Float64Array;
  private readonly p00: Float64Array;
  private readonly p01: Float64Array;
  private readonly p11: Float64Array;
  private readonly q: number;
  private readonly maxVar: number;
  private readonly maxRateVar: number;

  constructor(
    size: number,
    private readonly domain: AngleDomain,
    private readonly params: AngleFilterParams,
  ) {
    this.angle = new Float64Array(size);
    this.rate = new Float64Array(size);
    this.p00 = new Float64Array(size);
    this.p01 = new Float64Array(size);
    this.p11 = new Float64Array(size);
    this.q = params.rateWanderDegS * params.rateWanderDegS;
    this.maxVar = params.maxUncertaintyDeg * params.maxUncertaintyDeg;
    const rateCap = Math.max(params.maxRateDegS, 1e-6);
    this.maxRateVar = rateCap * rateCap;
  }

  /** Start a slot at a measured angle with variance angleVar and rate 0 +- rateSigma. */
  init(slot: number, angleDeg: number, angleVar: number, rateSigmaDegS: number): void {
    this.angle[slot] = this.normalise(angleDeg);
    this.rate[slot] = 0;
    this.p00[slot] = Math.min(angleVar, this.maxVar);
    this.p01[slot] = 0;
    this.p11[slot] = Math.min(rateSigmaDegS * rateSigmaDegS, this.maxRateVar);
  }

  /** Advance a slot by dt seconds. */
  predict(slot: number, dt: number): void {
    if (!(dt > 0)) return;
    const a = Math.exp(-dt / this.params.rateMemoryS);
    const p00 = this.p00[slot]!;
    const p01 = this.p01[slot]!;
    const p11 = this.p11[slot]!;
    const q = this.q;
    const dt2 = dt * dt;
    // P' = F P F^T + Q
    let n00 = p00 + 2 * dt * p01 + dt2 * p11 + (q * dt2 * dt) / 3;
    let n01 = a * (p01 + dt * p11) + (q * dt2) / 2;
    let n11 = a * a * p11 + q * dt;
    if (n00 > this.maxVar) {
      const s = Math.sqrt(this.maxVar / n00);
      n00 = this.maxVar;
      n01 *= s;
    }
    if (n11 > this.maxRateVar) {
      const s = Math.sqrt(this.maxRateVar / n11);
      n11 = this.maxRateVar;
      n01 *= s;
    }
    this.p00[slot] = n00;
    this.p01[slot] = n01;
    this.p11[slot] = n11;
    const rate = this.rate[slot]!;
    this.angle[slot] = this.angle[slot]! + rate * dt;
    this.rate[slot] = rate * a;
    this.settle(slot);
  }

  /** Measured minus predicted angle, the short way in the domain. */
  innovation(slot: number, zDeg: number): number {
    const d = zDeg - this.angle[slot]!;
    return this.domain === 'circle' ? wrapDeg(d) : d;
  }

  /** Variance of the innovation for a measurement of variance r. */
  innovationVar(slot: number, r: number): number {
    return this.p00[slot]! + r;
  }

  /** Standard deviation of the slot's angle, degrees. */
  sigmaDeg(slot: number): number {
    return Math.sqrt(this.p00[slot]!);
  }

  /** Fold in a measurement zDeg of variance r. */
  update(slot: number, zDeg: number, r: number): void {
    const nu = this.innovation(slot, zDeg);
    const p00 = this.p00[slot]!;
    const p01 = this.p01[slot]!;
    const p11 = this.p11[slot]!;
    const s = p00 + r;
    const k0 = p00 / s;
    const k1 = p01 / s;
    this.angle[slot] = this.angle[slot]! + k0 * nu;
    this.rate[slot] = this.rate[slot]! + k1 * nu;
    this.p00[slot] = (1 - k0) * p00;
    this.p01[slot] = (1 - k0) * p01;
    this.p11[slot] = Math.max(p11 - k1 * p01, 0);
    this.settle(slot);
  }

  private normalise(angleDeg: number): number {
    if (this.domain === 'circle') return wrapDeg(angleDeg);
    return Math.max(-90, Math.min(90, angleDeg));
  }

  /** Bring the state back into its domain, and keep the rate within its cap. */
  private settle(slot: number): void {
    const cap = this.params.maxRateDegS;
    const rate = this.rate[slot]!;
    if (rate > cap) this.rate[slot] = cap;
    else if (rate < -cap) this.rate[slot] = -cap;
    const angle = this.angle[slot]!;
    if (this.domain === 'circle') {
      if (angle > 180 || angle <= -180) this.angle[slot] = wrapDeg(angle);
      return;
    }
    if (angle <= 90 && angle >= -90) return;
    if (this.domain === 'half-circle') {
      // Past endfire the pair sees the mirror image: reflect the angle, reverse the motion.
      this.angle[slot] = angle > 90 ? Math.max(-90, 180 - angle) : Math.min(90, -180 - angle);
      this.rate[slot] = -this.rate[slot]!;
      this.p01[slot] = -this.p01[slot]!;
    } else {
      this.angle[slot] = angle > 90 ? 90 : -90;
      this.rate[slot] = 0;
      this.p01[slot] = 0;
    }
  }
}

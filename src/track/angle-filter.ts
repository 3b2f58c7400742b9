/**
 * A bank of Kalman filters, one per track slot, on one angle and its rate (a nearly constant
 * rate model whose rate relaxes to zero with a time constant). State and covariance live in
 * typed arrays sized once, so predicting and updating allocate nothing; the numbers of a call
 * go in and out through `io` (see hop-scratch.ts for why).
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
 * with q = rateWander^2 + (FLYBY_ACCEL x rate^2)^2 (continuous white noise on the rate).
 *
 * The second term lets a moving source turn: a source on a straight path at constant speed
 * sweeps past the array with angular acceleration 2 w^2 tan(b) (w its angular rate in rad/s,
 * b its angle from the point of closest approach; geometry of a straight line, common practice,
 * no source), so a fly-by speeds up and slows down by tens of deg/s per second while a static
 * source (rate near 0) keeps the small rateWander alone. The caller leaves the allowance out
 * (io[IO_HOLD_RATE] = 1) while another track is near, where the rate is what keeps two crossing
 * sources apart.
 */
import { wrapDeg } from './circular.js';

const RAD = Math.PI / 180;
/**
 * FLYBY_ACCEL x rate^2 bounds the angular acceleration of a straight-line pass (deg/s^2 for a
 * rate in deg/s): 2 tan(b) <= 3 covers a pass from 56 deg before to 56 deg after its closest point.
 */
const FLYBY_ACCEL = 3 * RAD;

export type AngleDomain = 'circle' | 'half-circle' | 'elevation';

export interface AngleFilterParams {
  rateWanderDegS: number;
  maxRateDegS: number;
  rateMemoryS: number;
  maxUncertaintyDeg: number;
}

/** Slots of `io`. */
export const IO_DT = 0;
/** Measured angle (init, update). */
export const IO_Z = 1;
/** Its variance; for init, the starting angle variance. */
export const IO_R = 2;
/** Starting rate standard deviation (init). */
export const IO_RATE_SIGMA = 3;
/** predict: 1 to leave out the fly-by allowance (another track is near: its rate is what tells them apart). */
export const IO_HOLD_RATE = 4;

export class AngleFilterBank {
  readonly angle: Float64Array;
  readonly rate: Float64Array;
  readonly io = new Float64Array(5);
  private readonly p00: Float64Array;
  private readonly p01: Float64Array;
  private readonly p11: Float64Array;
  private readonly q: number;
  private readonly maxVar: number;
  private readonly maxRate: number;
  private readonly maxRateVar: number;
  private readonly rateMemoryS: number;
  private readonly circle: boolean;
  private readonly reflect: boolean;

  constructor(size: number, domain: AngleDomain, params: AngleFilterParams) {
    this.angle = new Float64Array(size);
    this.rate = new Float64Array(size);
    this.p00 = new Float64Array(size);
    this.p01 = new Float64Array(size);
    this.p11 = new Float64Array(size);
    this.q = params.rateWanderDegS * params.rateWanderDegS;
    this.maxVar = params.maxUncertaintyDeg * params.maxUncertaintyDeg;
    this.maxRate = params.maxRateDegS;
    const rateCap = Math.max(params.maxRateDegS, 1e-6);
    this.maxRateVar = rateCap * rateCap;
    this.rateMemoryS = params.rateMemoryS;
    this.circle = domain === 'circle';
    this.reflect = domain === 'half-circle';
  }

  /** Start a slot at io[IO_Z] with variance io[IO_R], rate 0 +- io[IO_RATE_SIGMA]. */
  init(slot: number): void {
    const io = this.io;
    const z = io[IO_Z]!;
    this.angle[slot] = this.circle ? wrapDeg(z) : Math.max(-90, Math.min(90, z));
    this.rate[slot] = 0;
    this.p00[slot] = Math.min(io[IO_R]!, this.maxVar);
    this.p01[slot] = 0;
    const rs = io[IO_RATE_SIGMA]!;
    this.p11[slot] = Math.min(rs * rs, this.maxRateVar);
  }

  /** Advance a slot by io[IO_DT] seconds. */
  predict(slot: number): void {
    const dt = this.io[IO_DT]!;
    if (!(dt > 0)) return;
    const a = Math.exp(-dt / this.rateMemoryS);
    const p00 = this.p00[slot]!;
    const p01 = this.p01[slot]!;
    const p11 = this.p11[slot]!;
    const rate = this.rate[slot]!;
    const turn = this.io[IO_HOLD_RATE] === 1 ? 0 : FLYBY_ACCEL * rate * rate;
    const q = this.q + turn * turn;
    const dt2 = dt * dt;
    // P' = F P F^T + Q
    let n00 = p00 + 2 * dt * p01 + dt2 * p11 + (q * dt2 * dt) / 3;
    let n01 = a * (p01 + dt * p11) + (q * dt2) / 2;
    let n11 = a * a * p11 + q * dt;
    if (n00 > this.maxVar) {
      n01 *= Math.sqrt(this.maxVar / n00);
      n00 = this.maxVar;
    }
    if (n11 > this.maxRateVar) {
      n01 *= Math.sqrt(this.maxRateVar / n11);
      n11 = this.maxRateVar;
    }
    this.p00[slot] = n00;
    this.p01[slot] = n01;
    this.p11[slot] = n11;
    this.angle[slot] = this.angle[slot]! + rate * dt;
    this.rate[slot] = rate * a;
    this.settle(slot);
  }

  /**
   * Hold a slot static: its angle variance at most maxVar and its rate variance at most
   * maxRateVar (a settled chorus does not drift while it coasts, so a passer's call beside it
   * is not nearer to it than to the passer's own track).
   */
  holdStatic(slot: number, maxVar: number, maxRateVar: number): void {
    const p00 = this.p00[slot]!;
    const p11 = this.p11[slot]!;
    let p01 = this.p01[slot]!;
    if (p00 > maxVar) {
      p01 *= Math.sqrt(maxVar / p00);
      this.p00[slot] = maxVar;
    }
    if (p11 > maxRateVar) {
      p01 *= Math.sqrt(maxRateVar / p11);
      this.p11[slot] = maxRateVar;
    }
    this.p01[slot] = p01;
  }

  /** Put a slot at a fixed angle with no rate (a settled source's home). */
  pin(slot: number, angle: number): void {
    this.angle[slot] = angle;
    this.rate[slot] = 0;
  }

  /**
   * Restart a slot at a resting angle with no rate and the given angle variance (the track's
   * still model won the hop: its caller sat where it was last heard); the rate keeps its
   * variance, so the filter can learn a rate again.
   */
  restart(slot: number, angle: number, variance: number): void {
    this.angle[slot] = angle;
    this.rate[slot] = 0;
    this.p00[slot] = Math.min(variance, this.maxVar);
    this.p01[slot] = 0;
  }

  /** The angle variance of a slot (degrees squared). */
  variance(slot: number): number {
    return this.p00[slot]!;
  }

  /** Fold in the measurement io[IO_Z] of variance io[IO_R]. */
  update(slot: number): void {
    const io = this.io;
    let nu = io[IO_Z]! - this.angle[slot]!;
    if (this.circle) nu = wrapDeg(nu);
    const p00 = this.p00[slot]!;
    const p01 = this.p01[slot]!;
    const p11 = this.p11[slot]!;
    const s = p00 + io[IO_R]!;
    const k0 = p00 / s;
    const k1 = p01 / s;
    this.angle[slot] = this.angle[slot]! + k0 * nu;
    this.rate[slot] = this.rate[slot]! + k1 * nu;
    this.p00[slot] = (1 - k0) * p00;
    this.p01[slot] = (1 - k0) * p01;
    this.p11[slot] = Math.max(p11 - k1 * p01, 0);
    this.settle(slot);
  }

  /** Bring the state back into its domain, and keep the rate within its cap. */
  private settle(slot: number): void {
    const cap = this.maxRate;
    const rate = this.rate[slot]!;
    if (rate > cap) this.rate[slot] = cap;
    else if (rate < -cap) this.rate[slot] = -cap;
    const angle = this.angle[slot]!;
    if (this.circle) {
      if (angle > 180 || angle <= -180) this.angle[slot] = wrapDeg(angle);
      return;
    }
    if (angle <= 90 && angle >= -90) return;
    if (this.reflect) {
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

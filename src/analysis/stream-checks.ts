/**
 * Checks on a whole stream that a user must hear about once, plainly:
 *
 * - Window edge: the delays searched for are limited to what the geometry allows (spacing / c
 *   plus --lag-margin). When a large share of the confident hops put a pair's delay at that
 *   limit, or beyond spacing / c, the true delay probably lies beyond what the geometry allows: the spacing given is too small, or the
 *   channels are not the mics the geometry names.
 * - Geometry: the per-pair delays of a confident hop should be those of one direction,
 *   (p_a - p_b) . u / c (interface.md). When many hops' best direction leaves the pairs' own
 *   correlation peaks far from its delays (the closure error, against each pair's strong peak
 *   nearest the answer: an aliased call or two callers at once give a pair several), the
 *   geometry file does not describe the array (positions, units or channel order wrong). Only
 *   hops sure of their answer are judged (GEOMETRY_MIN_CONFIDENCE).
 * Both point to `bearline check-array`. Pure: hop results in, messages out; no I/O.
 */
import type { ArrayGeometry, MicPair } from '../geometry/array-geometry.js';
import { dot, sub } from '../geometry/vec3.js';
import type { HopResult } from './hop-analyzer.js';

/**
 * Confident hops needed before a check may speak while the stream runs (at its end, 10 do). With
 * 30, the first hops decided: a stream's first tenths of a second (the noise floor still being
 * learnt, wind read at random directions) or a stretch of two choruses calling at once, and a
 * right geometry was called wrong (at 300 still one cell: 46 % of its first 300 judged hops off,
 * 26 % of all). Motion-matrix cells scanned with the right geometry and with a wrong one (two mics
 * swapped, positions at half, three quarters or twice their scale), cells warned (either check)
 * with 30 -> 1000 and the geometry check's share 0.25 -> 0.3 (GEOMETRY_TRIGGER_SHARE): 48 kHz,
 * four draws (1313, 2027, 77, 4242; 104 cells each): right 7 -> 0, swapped 57 -> 52, half 94 ->
 * 81, three quarters 90 -> 80, twice 14 -> 11; 16 kHz, three draws (78 cells each): right 6 -> 0,
 * swapped 44 -> 36, half 73 -> 69, three quarters 66 -> 58, twice 18 -> 17. A wrong geometry
 * keeps being judged all night; a right one called wrong sends its user to check an array that
 * is fine.
 */
const MIN_HOPS = 1000;
/** Share of confident hops at the window edge that triggers the warning ... */
const TRIGGER_SHARE = 0.25;
/** ... and of the judged hops off the geometry. */
const GEOMETRY_TRIGGER_SHARE = 0.3;
/**
 * A delay within EDGE_SAMPLES of the search limit sits at the edge; so does, for a lone pair, a
 * delay within NEAR_PHYSICAL_SAMPLES of its physical limit D / c (a pair cannot tell a source
 * on its axis from a spacing given too small), and for an array, where some pair often lies
 * along a source, a delay BEYOND_PHYSICAL_SAMPLES past that limit.
 */
const EDGE_SAMPLES = 1;
const NEAR_PHYSICAL_SAMPLES = 0.2;
const BEYOND_PHYSICAL_SAMPLES = 0.5;
/**
 * The geometry check judges only hops of at least this confidence. Two callers at once leave a
 * pair with the other caller's peak as its strongest, and the coherent low part of wind reads near
 * lag 0 on every pair (confidence about 0.5): with every valid hop judged, recordings made with
 * the right geometry were told that it "probably does not describe the array" in 11 of 156
 * motion-matrix cells (six draws: 1313, 2027, 77, 4242, 555, 6060; 10 of them cells of two frog choruses,
 * test/cli/stream-warnings.test.ts), judging these hops in 6 (five of those and a crossing, each
 * at 25-27 % of the judged hops, just over the share of 0.25 then used). The same cells of two
 * draws (1313, 2027; 52 cells) scanned with a wrong geometry warned (either check) about as
 * before: two mics swapped 30 cells before and after, positions at half scale 47 -> 48, at twice
 * the scale 9 -> 8. Also judging only hops that report one source left no right-geometry cell with
 * this warning but missed the wrong preset of test/cli/stream-warnings.test.ts (a wrong geometry
 * makes the fusion report several sources); a higher share alone would miss wrong geometries too
 * (of their 56 geometry warnings in the same cells, 12 stood at 25-33 % and 10 at 30 % or less;
 * with MIN_HOPS, above, it became 0.3).
 */
const GEOMETRY_MIN_CONFIDENCE = 0.8;

export interface StreamCheckFigures {
  confidentHops: number;
  edgeHops: number;
  offGeometryHops: number;
  /** Hops the geometry check judged (GEOMETRY_MIN_CONFIDENCE). */
  geometryHops: number;
}

export class StreamChecks {
  /** Physical delay limit per pair, |p_a - p_b| / c, samples. */
  private readonly physical: Float64Array;
  private confident = 0;
  private edge = 0;
  private offGeometry = 0;
  private geometryHops = 0;
  private saidEdge = false;
  private saidGeometry = false;
  private readonly geometryName: string;

  constructor(
    geometry: ArrayGeometry,
    readonly pairs: readonly MicPair[],
    private readonly maxLag: Int32Array,
    private readonly sampleRate: number,
    speedOfSound: number,
    private readonly where: string = 'the stream',
  ) {
    this.geometryName = geometry.name;
    const baselines = pairs.map(([a, b]) => sub(geometry.mics[a]!.position, geometry.mics[b]!.position));
    this.physical = Float64Array.from(baselines, (b) => (Math.sqrt(dot(b, b)) / speedOfSound) * sampleRate);
  }

  /** Feed one hop; returns a warning the first time a check trips, else null. */
  observe(r: HopResult): string | null {
    if (!r.valid) return null;
    this.confident++;
    const P = this.pairs.length;
    let atEdge = false;
    for (let p = 0; p < P; p++) {
      const lag = Math.abs(r.tdoaS[p]! * this.sampleRate);
      const physicalEdge = P === 1 ? this.physical[p]! - NEAR_PHYSICAL_SAMPLES : this.physical[p]! + BEYOND_PHYSICAL_SAMPLES;
      if (lag >= this.maxLag[p]! - EDGE_SAMPLES || lag >= physicalEdge) atEdge = true;
    }
    if (atEdge) this.edge++;
    if (P > 1 && r.confidence >= GEOMETRY_MIN_CONFIDENCE) {
      this.geometryHops++;
      // The delays of one direction (what the search settles on) against each pair's own best
      // peak (./closure.ts): with a right geometry they agree on most confident hops; with wrong
      // positions or channels the pairs' own peaks lie elsewhere.
      if (r.offClosure) this.offGeometry++;
    }
    return this.check(false);
  }

  /** End of stream: the warnings not yet said (checked on whatever hops there were). */
  finish(): string | null {
    return this.check(true);
  }

  /** Every warning that applies to the stream so far (for --summary). */
  warnings(): string[] {
    const out: string[] = [];
    if (this.edgeTripped(true)) out.push(this.edgeMessage());
    if (this.geometryTripped(true)) out.push(this.geometryMessage());
    return out;
  }

  figures(): StreamCheckFigures {
    return { confidentHops: this.confident, edgeHops: this.edge, offGeometryHops: this.offGeometry, geometryHops: this.geometryHops };
  }

  private edgeTripped(final: boolean): boolean {
    return this.confident >= (final ? 10 : MIN_HOPS) && this.edge > TRIGGER_SHARE * this.confident;
  }

  private geometryTripped(final: boolean): boolean {
    return this.geometryHops >= (final ? 10 : MIN_HOPS) && this.offGeometry > GEOMETRY_TRIGGER_SHARE * this.geometryHops;
  }

  private check(final: boolean): string | null {
    const msgs: string[] = [];
    if (!this.saidEdge && this.edgeTripped(final)) {
      this.saidEdge = true;
      msgs.push(this.edgeMessage());
    }
    if (!this.saidGeometry && this.geometryTripped(final)) {
      this.saidGeometry = true;
      msgs.push(this.geometryMessage());
    }
    return msgs.length ? msgs.join('\n') : null;
  }

  private edgeMessage(): string {
    const pct = Math.round((100 * this.edge) / Math.max(1, this.confident));
    return (
      `${pct} % of the confident hops in ${this.where} put a delay at or beyond the largest delay the ` +
      `geometry allows (spacing / speed of sound): unless the sources sit on the line through the mics, ` +
      `the true delay is larger, so the array is probably larger than "${this.geometryName}" says ` +
      `(e.g. a 20 cm array scanned with a 10 cm preset or --spacing: give the array's own preset, ` +
      `--spacing or geometry file), or the channels are not the mics the geometry names; ` +
      `check the array with 'bearline check-array'`
    );
  }

  private geometryMessage(): string {
    const pct = Math.round((100 * this.offGeometry) / Math.max(1, this.geometryHops));
    return (
      `${pct} % of the confident hops (confidence ${GEOMETRY_MIN_CONFIDENCE} or more) in ${this.where} have pair delays that fit no single direction of this ` +
      `geometry: "${this.geometryName}" probably does not describe the array (its size, positions, units or ` +
      `channel order; e.g. a 20 cm array scanned with a 10 cm preset: give the array's own preset, --spacing or ` +
      `geometry file); check it with 'bearline check-array'`
    );
  }
}

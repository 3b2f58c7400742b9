import { AUDIO_TOP_HZ } from '../dsp/bands.js';
import type { PairCorrelator } from '../dsp/gcc.js';
import { GccKernels, SRP_SEARCH_ARGS } from '../dsp/gcc-kernels.js';
import { micPairs, type ArrayGeometry, type MicPair } from '../geometry/array-geometry.js';
import { arrayMirror, type ArrayMirror } from '../geometry/array-mirror.js';
import { arrayShape, type ArrayShape } from '../geometry/array-shape.js';
import { dot, norm, sub, unitFromAzEl, unitFromAzElInto, type Vec3 } from '../geometry/vec3.js';
import { LineCone } from './cone.js';
import { checkLagFitsFrame, searchLagLimit, type Direction, type DirectionModel } from './direction-model.js';
import { fastAtan2 } from '../util/fast-atan2.js';
import { invertMatrix } from '../util/matrix.js';

/** Smallest automatic grid step in the audio band (degrees): finer grids cost time and the refinement recovers the rest. */
const MIN_AUTO_STEP_DEG = 2.5;
/** The grid's lag step, samples, at most ... */
const GRID_LAG_STEP = 1.4;
/** ... and, above the audio band (AUDIO_TOP_HZ), at most this share of the period of the highest frequency the correlations hold. */
const GRID_PERIOD_SHARE = 0.35;

/** Grid settings of the direction search. */
export interface SearchGrid {
  /** Angular step of the grid, degrees (default: from the array's largest lag). */
  readonly stepDeg?: number;
  /** The search reads the correlations of at most this many pairs, the longest baselines (0 or undefined: all). */
  readonly pairs?: number;
  /** The highest frequency the correlations hold, Hz (the analysis' --max-freq; default: a quarter of the sample rate). */
  readonly topHz?: number;
}

/**
 * Steered response power with PHAT (DiBiase, Silverman and Brandstein 2001) over a
 * precomputed grid of directions: every pair's lag for every grid direction is computed once,
 * so a hop costs one interpolated look-up per pair per grid point. Candidates are the
 * grid's local maxima; refined per-pair lags become a direction by least squares.
 */
export class SrpDirectionModel implements DirectionModel {
  readonly pairs: readonly MicPair[];
  readonly maxLag: Int32Array;
  readonly lagLimit: Float64Array;
  readonly mirror: ArrayMirror | null;
  readonly shape: ArrayShape;
  /** The pairs whose correlations the search reads (ascending; all of them unless SearchGrid.pairs says fewer). */
  readonly curvePairs: Int32Array;
  private readonly axis: Vec3;
  /** A line's cone of directions (null for planes and solids). */
  private readonly cone: LineCone | null;
  /** Pair baselines p_a - p_b (m). */
  private readonly baselines: Vec3[];
  /** Scratch unit vector of lagsOf. */
  private readonly unit: [number, number, number] = [0, 0, 0];
  private readonly gridDirs: Vec3[];
  /** Per pair and grid point (index p * G + g): the lag. */
  private readonly gridLag: Float64Array;
  /**
   * Per grid point and search pair (index g * S + s for curvePairs[s], a point's pairs side by
   * side): the index in `lagTable` of the whole lag below the point's lag, and the fraction above it.
   */
  private readonly gridIdx: Int32Array;
  private readonly gridFrac: Float64Array;
  /** This hop's correlations of the search pairs over their lag windows, curvePairs[s]'s lag l at lagBase[s] + l. */
  private readonly lagTable: Float64Array;
  private readonly lagBase: Int32Array;
  /** Neighbours of grid point g: nbList[nbStart[g] .. nbStart[g + 1]). */
  private readonly nbStart: Int32Array;
  private readonly nbList: Int32Array;
  private readonly power: Float64Array;
  /** The coarse pass in WebAssembly (../dsp/gcc-kernels.ts, bit-identical), null on the JavaScript path; its arrays live in its memory. */
  private readonly kernels: GccKernels | null;
  /** srp_search's argument block and outputs (kernels only). */
  private readonly searchArgs: Int32Array | null;
  private readonly foundScores: Float64Array | null;
  /** Hop counter and the hop at which each grid point's power was last computed. */
  private hop = 0;
  private readonly stamp: Int32Array;
  /** The coarse subset (fine grid indices) and its neighbour lists (indices into the subset). */
  private readonly coarse: Int32Array;
  private readonly cnbStart: Int32Array;
  private readonly cnbList: Int32Array;
  private readonly starts: Int32Array;
  private readonly startPower: Float64Array;
  private readonly found: Int32Array;
  private readonly lsInverseFlat: Float64Array;
  private readonly lsRhs: Float64Array;
  /** The fitted coefficients (scratch). */
  private readonly lsCoef: Float64Array;
  /**
   * Prepared subsets of pairs (prepareSubset): per subset the used pairs in order, and the
   * d x m matrix from their lags to the coefficients ([i * m + j] for the j-th used pair).
   */
  private readonly subsets: { pairs: Int32Array; w: Float64Array }[] = [];
  /** Pair baselines projected on the subspace basis, [p * d + i]. */
  private readonly baselineProj: Float64Array;
  private readonly basis: Vec3[];

  constructor(
    geometry: ArrayGeometry,
    private readonly sampleRate: number,
    private readonly speedOfSound: number,
    lagMargin: number,
    frame: number,
    grid: SearchGrid = {},
    /** 'js' keeps the coarse pass in JavaScript where the WebAssembly kernels load (tests). */
    kernelPath: 'auto' | 'js' = 'auto',
  ) {
    this.pairs = micPairs(geometry);
    const P = this.pairs.length;
    this.baselines = this.pairs.map(([a, b]) => sub(geometry.mics[a]!.position, geometry.mics[b]!.position));
    this.maxLag = Int32Array.from(this.baselines, (bl) => searchLagLimit(norm(bl), sampleRate, speedOfSound, lagMargin));
    this.lagLimit = Float64Array.from(this.baselines, (bl) => (norm(bl) / speedOfSound) * sampleRate);
    checkLagFitsFrame(this.maxLag, frame);
    const shaped = arrayShape(geometry);
    const { shape, axis } = shaped;
    this.shape = shape;
    this.axis = axis;
    // One mirror for the grid, the solve and the records (src/geometry/array-mirror.ts).
    this.mirror = arrayMirror(geometry, shaped);
    this.cone = shape === 'line' ? new LineCone(axis, this.mirror!) : null;
    // Default step: fine enough that no pair's lag is more than about 0.7 samples off at the
    // nearest grid point (the refinement then takes it the rest of the way).
    const largestLag = Math.max(...this.maxLag);
    const step = grid.stepDeg ?? autoStepDeg(shape, largestLag, sampleRate, grid.topHz ?? sampleRate / 4);
    this.gridDirs = makeGrid(shape, this.mirror, step);
    const G = this.gridDirs.length;
    this.curvePairs = longestPairs(this.baselines, grid.pairs ?? 0);
    const S = this.curvePairs.length;
    // Each search pair's window holds lags -maxLag .. maxLag + 1 (a grid lag lies within the physical limit).
    this.lagBase = new Int32Array(S);
    let tableSize = 0;
    for (let s = 0; s < S; s++) {
      const L = this.maxLag[this.curvePairs[s]!]!;
      this.lagBase[s] = tableSize + L;
      tableSize += 2 * L + 2;
    }
    // The coarse subset (below) has fewer than G points.
    const nb = neighbourLists(this.gridDirs, step);
    const nbTotal = nb.reduce((sum, list) => sum + list.length, 0);
    const k = kernelPath === 'auto' ? GccKernels.create(GccKernels.bytesFor([G * S, tableSize, G, 12, 16], [G * S, G, G, G + 1, nbTotal, 2 * G + 1, 12 * G, 12, 16, SRP_SEARCH_ARGS])) : null;
    this.kernels = k;
    this.starts = k ? k.i32(12) : new Int32Array(12);
    this.startPower = k ? k.f64(12) : new Float64Array(12);
    this.found = k ? k.i32(16) : new Int32Array(16);
    this.foundScores = k ? k.f64(16) : null;
    this.gridLag = new Float64Array(G * P);
    this.gridIdx = k ? k.i32(G * S) : new Int32Array(G * S);
    this.gridFrac = k ? k.f64(G * S) : new Float64Array(G * S);
    this.lagTable = k ? k.f64(tableSize) : new Float64Array(tableSize);
    for (let g = 0; g < G; g++) {
      for (let p = 0; p < P; p++) {
        const lag = this.lagFor(this.gridDirs[g]!, p);
        if (Math.floor(lag) < -this.maxLag[p]! || Math.floor(lag) + 1 > this.maxLag[p]! + 1) throw new Error(`grid lag ${lag} outside pair ${p}'s window`);
        this.gridLag[p * G + g] = lag;
      }
      for (let s = 0; s < S; s++) {
        const lag = this.gridLag[this.curvePairs[s]! * G + g]!;
        const i = Math.floor(lag);
        this.gridIdx[g * S + s] = this.lagBase[s]! + i;
        this.gridFrac[g * S + s] = lag - i;
      }
    }
    this.nbStart = k ? k.i32(G + 1) : new Int32Array(G + 1);
    for (let g = 0; g < G; g++) this.nbStart[g + 1] = this.nbStart[g]! + nb[g]!.length;
    this.nbList = k ? k.i32(this.nbStart[G]!) : new Int32Array(this.nbStart[G]!);
    for (let g = 0; g < G; g++) this.nbList.set(nb[g]!, this.nbStart[g]!);
    this.power = k ? k.f64(G) : new Float64Array(G);
    this.stamp = (k ? k.i32(G) : new Int32Array(G)).fill(-1);
    // Coarse subset: the fine point nearest each point of a grid twice as coarse.
    const coarseDirs = makeGrid(shape, this.mirror, 2 * step);
    const picked = new Set<number>();
    const byHeight = new ByHeight(this.gridDirs);
    for (const u of coarseDirs) {
      let best = 0;
      let bestDot = -2;
      // The nearest fine point lies within a step (rings a step apart, points at most a step apart along a ring).
      byHeight.near(u, (2 * step * Math.PI) / 180, (g) => {
        const d = dot(u, this.gridDirs[g]!);
        if (d > bestDot || (d === bestDot && g < best)) {
          bestDot = d;
          best = g;
        }
      });
      picked.add(best);
    }
    const coarse = [...picked].sort((a, b) => a - b);
    this.coarse = k ? k.i32(coarse.length) : new Int32Array(coarse.length);
    this.coarse.set(coarse);
    const cnb = neighbourLists(Array.from(this.coarse, (g) => this.gridDirs[g]!), 2 * step);
    const cnbTotal = cnb.reduce((sum, list) => sum + list.length, 0);
    this.cnbStart = k ? k.i32(this.coarse.length + 1) : new Int32Array(this.coarse.length + 1);
    for (let i = 0; i < this.coarse.length; i++) this.cnbStart[i + 1] = this.cnbStart[i]! + cnb[i]!.length;
    if (k && cnbTotal > 12 * G) throw new Error('coarse neighbour lists larger than reserved');
    this.cnbList = k ? k.i32(cnbTotal) : new Int32Array(cnbTotal);
    for (let i = 0; i < this.coarse.length; i++) this.cnbList.set(cnb[i]!, this.cnbStart[i]!);
    if (k) {
      const args = (this.searchArgs = k.i32(SRP_SEARCH_ARGS));
      const at = (v: Float64Array | Int32Array) => k.address(v);
      args.set([at(this.lagTable), at(this.gridIdx), at(this.gridFrac), S, at(this.power), at(this.stamp), 0, at(this.coarse), this.coarse.length,
        at(this.cnbStart), at(this.cnbList), at(this.nbStart), at(this.nbList), this.starts.length, at(this.starts), at(this.startPower), at(this.found), at(this.foundScores!), 0]);
      const theirs = [this.lagTable, this.gridIdx, this.gridFrac, this.power, this.stamp, this.coarse, this.cnbStart, this.cnbList, this.nbStart, this.nbList, this.starts, this.startPower, this.found, this.foundScores!];
      if (!theirs.every((v) => k.owns(v))) throw new Error('SrpDirectionModel: a kernel array is outside the kernels memory');
    } else this.searchArgs = null;
    // Least squares for the direction from lags, in the subspace the array spans.
    this.basis = shape === 'solid' ? [[1, 0, 0], [0, 1, 0], [0, 0, 1]] : shape === 'plane' ? planeBasis(axis) : [axis];
    const d = this.basis.length;
    const ata = Array.from({ length: d }, () => new Array<number>(d).fill(0));
    for (const bl of this.baselines) {
      const row = this.basis.map((e) => dot(bl, e));
      for (let i = 0; i < d; i++) for (let j = 0; j < d; j++) ata[i]![j]! += row[i]! * row[j]!;
    }
    const inverse = invertMatrix(ata.flat(), ata.length);
    if (inverse === null) throw new Error('array geometry is degenerate for the direction fit');
    this.lsInverseFlat = Float64Array.from(inverse);
    this.lsRhs = new Float64Array(d);
    this.lsCoef = new Float64Array(d);
    this.baselineProj = Float64Array.from(this.baselines.flatMap((bl) => this.basis.map((e) => dot(bl, e))));
  }

  /** Lag (samples) of pair p for a source in unit direction u: (p_a - p_b) . u / c. */
  lagFor(u: Vec3, p: number): number {
    return (dot(this.baselines[p]!, u) / this.speedOfSound) * this.sampleRate;
  }

  lagsOf(azimuthDeg: number, elevationDeg: number, out: Float64Array): void {
    const u = unitFromAzElInto(azimuthDeg, elevationDeg, this.unit);
    for (let p = 0; p < this.baselines.length; p++) out[p] = this.lagFor(u, p);
  }

  get gridSize(): number {
    return this.gridDirs.length;
  }

  /** Copy this hop's correlations over each search pair's lag window into lagTable. */
  private fillLagTable(correlators: readonly PairCorrelator[]): void {
    const t = this.lagTable;
    for (let s = 0; s < this.curvePairs.length; s++) {
      const p = this.curvePairs[s]!;
      const gcc = correlators[p]!.gcc;
      const n = gcc.length;
      const base = this.lagBase[s]!;
      const L = this.maxLag[p]!;
      for (let lag = 0; lag <= L + 1; lag++) t[base + lag] = gcc[lag]!;
      for (let lag = -L; lag < 0; lag++) t[base + lag] = gcc[n + lag]!;
    }
  }

  /** Steered response at grid point g (sum over the search pairs of the linearly interpolated correlation). */
  private powerAt(g: number): number {
    const P = this.curvePairs.length;
    const t = this.lagTable;
    const idx = this.gridIdx;
    const frac = this.gridFrac;
    let s = 0;
    for (let o = g * P, e = o + P; o < e; o++) {
      const j = idx[o]!;
      const y0 = t[j]!;
      s += y0 + frac[o]! * (t[j + 1]! - y0);
    }
    return s;
  }

  private powerCached(g: number): number {
    if (this.stamp[g] !== this.hop) {
      this.stamp[g] = this.hop;
      this.power[g] = this.powerAt(g);
    }
    return this.power[g]!;
  }

  /**
   * Coarse to fine: the response on a coarse subset of the grid (about a quarter of it), its
   * local maxima, then a climb on the fine grid from each to the fine local maximum. The
   * fine grid is evaluated only where a climb goes.
   */
  findCandidates(correlators: readonly PairCorrelator[], maxCount: number, lagsOut: Float64Array, scoresOut: Float64Array): number {
    const P = this.pairs.length;
    const G = this.gridDirs.length;
    this.hop++;
    this.fillLagTable(correlators);
    const coarse = this.coarse;
    const kern = this.kernels;
    if (kern) {
      kern.srpPower(this.lagTable, this.gridIdx, this.gridFrac, this.curvePairs.length, coarse, 0, coarse.length, this.power, this.stamp, this.hop);
      const args = this.searchArgs!;
      args[6] = this.hop;
      args[18] = Math.min(maxCount, this.found.length);
      const found = kern.srpSearch(args);
      const scores = this.foundScores!;
      for (let pos = 0; pos < found; pos++) {
        scoresOut[pos] = scores[pos]!;
        const g = this.found[pos]!;
        for (let p = 0; p < P; p++) lagsOut[pos * P + p] = this.gridLag[p * G + g]!;
      }
      return found;
    }
    for (let i = 0; i < coarse.length; i++) this.powerCached(coarse[i]!);
    // Coarse local maxima, best first.
    const starts = this.starts;
    const startPw = this.startPower;
    const want = starts.length;
    let nStart = 0;
    for (let i = 0; i < coarse.length; i++) {
      const g = coarse[i]!;
      const v = this.power[g]!;
      if (nStart === want && v <= startPw[nStart - 1]!) continue;
      let isMax = true;
      for (let j = this.cnbStart[i]!, e = this.cnbStart[i + 1]!; j < e; j++) {
        const k = coarse[this.cnbList[j]!]!;
        const w = this.power[k]!;
        if (w > v || (w === v && k < g)) {
          isMax = false;
          break;
        }
      }
      if (!isMax) continue;
      let pos = nStart < want ? nStart : want - 1;
      while (pos > 0 && startPw[pos - 1]! < v) {
        startPw[pos] = startPw[pos - 1]!;
        starts[pos] = starts[pos - 1]!;
        pos--;
      }
      startPw[pos] = v;
      starts[pos] = g;
      if (nStart < want) nStart++;
    }
    // Climb on the fine grid; keep distinct end points, best first.
    let found = 0;
    for (let i = 0; i < nStart; i++) {
      let g = starts[i]!;
      let v = this.power[g]!;
      for (let step = 0; step < 64; step++) {
        let best = g;
        let bestV = v;
        for (let j = this.nbStart[g]!, e = this.nbStart[g + 1]!; j < e; j++) {
          const k = this.nbList[j]!;
          const w = this.powerCached(k);
          if (w > bestV) {
            bestV = w;
            best = k;
          }
        }
        if (best === g) break;
        g = best;
        v = bestV;
      }
      let dup = false;
      for (let f = 0; f < found; f++) if (this.found[f] === g) dup = true;
      if (dup) continue;
      if (found === maxCount && v <= scoresOut[found - 1]!) continue;
      let pos = found < maxCount ? found : maxCount - 1;
      while (pos > 0 && scoresOut[pos - 1]! < v) {
        scoresOut[pos] = scoresOut[pos - 1]!;
        this.found[pos] = this.found[pos - 1]!;
        for (let p = 0; p < P; p++) lagsOut[pos * P + p] = lagsOut[(pos - 1) * P + p]!;
        pos--;
      }
      scoresOut[pos] = v;
      this.found[pos] = g;
      for (let p = 0; p < P; p++) lagsOut[pos * P + p] = this.gridLag[p * G + g]!;
      if (found < maxCount) found++;
    }
    return found;
  }

  solve(lags: Float64Array, offset: number, out: Direction): boolean {
    // Least squares in the array's subspace: coef = (B^T B)^-1 B^T y, with y_p = c tdoa_p.
    const d = this.basis.length;
    const atb = this.lsRhs;
    const proj = this.baselineProj;
    atb.fill(0);
    for (let p = 0; p < this.baselines.length; p++) {
      const y = (lags[offset + p]! / this.sampleRate) * this.speedOfSound;
      for (let i = 0; i < d; i++) atb[i] += proj[p * d + i]! * y;
    }
    const coef = this.lsCoef;
    for (let i = 0; i < d; i++) {
      let c = 0;
      for (let j = 0; j < d; j++) c += this.lsInverseFlat[i * d + j]! * atb[j]!;
      coef[i] = c;
    }
    return this.directionOf(coef, out);
  }

  prepareSubset(use: Uint8Array): number {
    // The same least squares over the used pairs' rows only, inverted once: coef = W y.
    const d = this.basis.length;
    const P = this.baselines.length;
    const proj = this.baselineProj;
    const ata = new Array<number>(d * d).fill(0);
    for (let p = 0; p < P; p++) {
      if (use[p] !== 1) continue;
      for (let i = 0; i < d; i++) for (let j = 0; j < d; j++) ata[i * d + j]! += proj[p * d + i]! * proj[p * d + j]!;
    }
    const inverse = invertMatrix(ata, d);
    if (inverse === null) return -1;
    const pairs = Int32Array.from({ length: P }, (_, p) => p).filter((p) => use[p] === 1);
    const m = pairs.length;
    const w = new Float64Array(d * m);
    for (let j = 0; j < m; j++) {
      const p = pairs[j]!;
      for (let i = 0; i < d; i++) {
        let v = 0;
        for (let l = 0; l < d; l++) v += inverse[i * d + l]! * proj[p * d + l]!;
        w[i * m + j] = (v / this.sampleRate) * this.speedOfSound;
      }
    }
    return this.subsets.push({ pairs, w }) - 1;
  }

  solveSubset(handle: number, lags: Float64Array, out: Direction): boolean {
    // Over the used pairs only (the unused ones' terms were zeros: the same sums).
    const { pairs, w } = this.subsets[handle]!;
    const d = this.basis.length;
    const m = pairs.length;
    const coef = this.lsCoef;
    for (let i = 0; i < d; i++) {
      let c = 0;
      for (let j = 0; j < m; j++) c += w[i * m + j]! * lags[pairs[j]!]!;
      coef[i] = c;
    }
    return this.directionOf(coef, out, true);
  }

  /** The direction of the fitted vector sum_i coef[i] basis[i] (its length at most 1 off a solid array). */
  private directionOf(coef: Float64Array, out: Direction, fast = false): boolean {
    const d = this.basis.length;
    let ux = 0;
    let uy = 0;
    let uz = 0;
    for (let i = 0; i < d; i++) {
      const c = coef[i]!;
      const e = this.basis[i]!;
      ux += c * e[0];
      uy += c * e[1];
      uz += c * e[2];
    }
    // sqrt of the sum for a subset (per bin, many a hop: hypot costs several times more); the
    // full solve keeps hypot, so the hop's answer is the same to the last bit as before subsets.
    let len = fast ? Math.sqrt(ux * ux + uy * uy + uz * uz) : Math.hypot(ux, uy, uz);
    if (!Number.isFinite(len)) return false;
    // A zero fit is a direction for a line (broadside: the cone is the plane across the axis) and
    // for a plane (along its normal); only a solid array needs a vector to normalise.
    if (this.shape === 'solid' && !(len > 1e-9)) return false;
    if (this.shape === 'solid' || len > 1) {
      ux /= len;
      uy /= len;
      uz /= len;
      len = 1;
    }
    if (this.shape === 'plane') {
      // The component off the plane is unknown in sign: take the side the mirror convention
      // reports (src/geometry/array-mirror.ts), the same side the grid covers.
      const nrm = this.mirror!.normal;
      const h = Math.sqrt(Math.max(0, 1 - len * len));
      ux += h * nrm[0];
      uy += h * nrm[1];
      uz += h * nrm[2];
    } else if (this.shape === 'line') {
      // Cone around the axis: the horizontal direction on it, on the reported side.
      const ax = this.axis;
      const cosAngle = ux * ax[0] + uy * ax[1] + uz * ax[2];
      const az = ((fast ? this.cone!.azimuthDegFast(cosAngle) : this.cone!.azimuthDeg(cosAngle)) * Math.PI) / 180;
      ux = Math.sin(az);
      uy = Math.cos(az);
      uz = 0;
    }
    if (fast) {
      // A subset's (per bin) angles by the polynomial atan2 (within 2e-6 rad; elevation as the
      // angle over the horizontal, the same as asin(uz / r)).
      let az = (fastAtan2(ux, uy) * 180) / Math.PI;
      if (az <= -180) az += 360;
      out.azimuthDeg = az;
      out.elevationDeg = this.shape === 'line' ? null : (fastAtan2(uz, Math.sqrt(ux * ux + uy * uy)) * 180) / Math.PI;
      return true;
    }
    let azDeg = (Math.atan2(ux, uy) * 180) / Math.PI;
    if (azDeg <= -180) azDeg += 360;
    const r = Math.hypot(ux, uy, uz);
    out.azimuthDeg = azDeg;
    out.elevationDeg = this.shape === 'line' ? null : (Math.asin(Math.max(-1, Math.min(1, uz / r))) * 180) / Math.PI;
    return true;
  }

}

function planeBasis(normal: Vec3): Vec3[] {
  const ref: Vec3 = Math.abs(normal[2]) < 0.9 ? [0, 0, 1] : [1, 0, 0];
  const e1 = cross(normal, ref);
  const l1 = norm(e1);
  const a: Vec3 = [e1[0] / l1, e1[1] / l1, e1[2] / l1];
  const b = cross(normal, a);
  return [a, b];
}

function cross(a: Vec3, b: Vec3): Vec3 {
  return [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];
}

/**
 * Directions searched: a horizontal circle for lines, for planes the hemisphere on the side the
 * mirror reports, a sphere for solids.
 */
function makeGrid(shape: ArrayShape, mirror: ArrayMirror | null, stepDeg: number): Vec3[] {
  const dirs: Vec3[] = [];
  if (shape === 'line') {
    for (let az = -180; az < 180; az += stepDeg) dirs.push(unitFromAzEl(az, 0));
    return dirs;
  }
  const side = shape === 'plane' ? mirror!.normal : null;
  // Rings of constant elevation with about stepDeg spacing along each ring.
  for (let el = -90; el <= 90 + 1e-9; el += stepDeg) {
    const ring = Math.max(1, Math.round((360 * Math.cos((el * Math.PI) / 180)) / stepDeg));
    for (let i = 0; i < ring; i++) {
      const u = unitFromAzEl(-180 + (360 * i) / ring, el);
      if (side && dot(u, side) < -1e-9) continue;
      dirs.push(u);
    }
  }
  return dirs;
}

/**
 * The automatic grid step, degrees. The lag step between neighbouring grid points (along the
 * largest lag) is at most GRID_LAG_STEP samples and, where the analysis reaches above the audio
 * band (`topHz` over AUDIO_TOP_HZ), GRID_PERIOD_SHARE of the period of its highest frequency
 * (sampleRate / topHz samples): the correlation of a band-limited call oscillates at
 * about that period, and a coarser grid steps over its peak (the refinement then climbs a
 * neighbouring cycle). At 192 kHz with 90 kHz on top the period is 2.1 samples, and a 10 cm
 * tetrahedron's grid stepped 2.4 samples: a bat's events came out up to 7 deg off
 * (test/accuracy/bats.test.ts; 0.14 deg with the period rule, 0.15 s memory). There the floor
 * MIN_AUTO_STEP_DEG does not hold: at 384 kHz a 10 cm array's largest lag is 112 samples, and with a floor that
 * fell with the square of the lag step's share a bat's events were 3.9 deg off at p90 (0.2 deg
 * without; the 0.57 deg grid has 127 000 points: about 3 s to set up, then 5x real time here).
 * Audio-band grids stay as the tracker's settings were chosen with them: the period rule at 16
 * kHz (7.6 kHz on top: a grid twice as fine on a 20 cm square) took the motion matrix (23 draws;
 * cells outside the targets) from 101 to 106, id switches 92 -> 116.
 */
export function autoStepDeg(shape: ArrayShape, largestLag: number, sampleRate: number, topHz: number): number {
  const ultrasonic = topHz > AUDIO_TOP_HZ;
  const lagStep = ultrasonic ? Math.min(GRID_LAG_STEP, (GRID_PERIOD_SHARE * sampleRate) / topHz) : GRID_LAG_STEP;
  return Math.max(ultrasonic ? 0 : MIN_AUTO_STEP_DEG, Math.min(shape === 'line' ? 3 : 8, ((lagStep / largestLag) * 180) / Math.PI));
}

/**
 * Directions by their z (the sine of elevation), for the searches of nearby points: a point
 * within angle a of u has its elevation within a of u's, so only the points in that band of z are
 * compared (the grids hold up to some 10^5 points; comparing every pair took minutes).
 */
class ByHeight {
  private readonly order: Int32Array;
  private readonly z: Float64Array;
  constructor(dirs: readonly Vec3[]) {
    this.order = Int32Array.from(dirs.keys()).sort((a, b) => dirs[a]![2] - dirs[b]![2]);
    this.z = Float64Array.from(this.order, (i) => dirs[i]![2]);
  }
  /** Calls visit(j) for every point whose elevation lies within angleRad of u's (and some more). */
  near(u: Vec3, angleRad: number, visit: (j: number) => void): void {
    const el = Math.asin(Math.max(-1, Math.min(1, u[2])));
    const lo = el - angleRad <= -Math.PI / 2 ? -2 : Math.sin(el - angleRad) - 1e-9;
    const hi = el + angleRad >= Math.PI / 2 ? 2 : Math.sin(el + angleRad) + 1e-9;
    let a = 0;
    let b = this.z.length;
    while (a < b) {
      const m = (a + b) >> 1;
      if (this.z[m]! < lo) a = m + 1;
      else b = m;
    }
    for (let i = a; i < this.z.length && this.z[i]! <= hi; i++) visit(this.order[i]!);
  }
}

/** For each grid point, the points within 1.6 grid steps (its neighbourhood for local maxima). */
function neighbourLists(dirs: Vec3[], stepDeg: number): Int32Array[] {
  const angle = (1.6 * stepDeg * Math.PI) / 180;
  const cosLimit = Math.cos(angle);
  const index = new ByHeight(dirs);
  return dirs.map((u, i) => {
    const list: number[] = [];
    index.near(u, angle, (j) => {
      if (j !== i && dot(u, dirs[j]!) >= cosLimit) list.push(j);
    });
    return Int32Array.from(list.sort((a, b) => a - b));
  });
}

/**
 * The pairs of the longest baselines, at most `count` of them (all when count is 0 or at least
 * their number), in ascending pair order. Pairs of equal baselines (within 0.1 mm: the chords of
 * a circle, the edges of a triangle or a tetrahedron) are taken whole or not at all, so that the
 * search treats the array's symmetric directions alike; the longest group is always taken whole,
 * even when it alone holds more than `count` pairs.
 */
export function longestPairs(baselines: readonly Vec3[], count: number): Int32Array {
  const P = baselines.length;
  if (!(count > 0) || count >= P) return Int32Array.from({ length: P }, (_, p) => p);
  const len = baselines.map((b) => Math.round(norm(b) * 1e4));
  const order = Array.from({ length: P }, (_, p) => p).sort((a, b) => len[b]! - len[a]! || a - b);
  let take = 0;
  while (take < P) {
    let end = take;
    while (end < P && len[order[end]!] === len[order[take]!]) end++;
    if (end > count) break;
    take = end;
  }
  if (take === 0) while (take < P && len[order[take]!] === len[order[0]!]) take++;
  return Int32Array.from(order.slice(0, take).sort((a, b) => a - b));
}

import { existsSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import type { BandLayout } from './bands.js';
import { assembleWat, kernelTextPath } from './gcc-kernels-assemble.js';
import { clampToStart, derivativePhasorFloats, newtonStep, setDerivativePhasors, setCoherencePhasors, setPhasorsF32, setSplitPhasorsF32, startNewton, sumDerivativeLanes, type UnitLayout } from './gcc-lanes.js';

/**
 * The per-bin kernels of the analysis in WebAssembly SIMD (./gcc-kernels.wat): PHAT magnitudes,
 * the cross-spectrum memory, band scores, the Newton refinement's derivatives and the hop
 * coherence, two double-precision lanes per instruction (1 / |X|, the band scores, the
 * derivatives and the hop coherence: four float32 lanes).
 * Every lane repeats the JavaScript kernel's arithmetic in the same order (./gcc.ts,
 * ./gcc-lanes.ts), so the results are bit for bit those of the JavaScript path (checked by
 * test/dsp/gcc-kernels.test.ts and, hop by hop over the matrix, by test/bench/hop-diff.ts). The
 * JavaScript kernels stay as the fallback: without WebAssembly SIMD, with BEARLINE_KERNELS=js,
 * or with BEARLINE_FFT=fftjs (the whole JavaScript path: the fft.js FFT's spectra are double
 * precision, which the float32 kernels do not take).
 *
 * Each analyzer gets its own instance and memory (sized once: views never go stale); the arrays
 * the kernels touch are views into that memory, handed out by f64() and friends.
 */
/** The part of the WebAssembly API used here (the project's TypeScript lib has no DOM types). */
interface WasmMemory {
  readonly buffer: ArrayBuffer;
  grow(pages: number): number;
}
type WasmModule = object;
declare const WebAssembly: {
  Module: new (bytes: Uint8Array) => WasmModule;
  Instance: new (module: WasmModule, imports: object) => { readonly exports: object };
};

interface KernelExports {
  memory: WasmMemory;
  magnitudes(spec: number, power: number, inv: number, k0: number, k1: number, ut: number, c: number, stride: number, half: number): void;
  times(w: number, inv: number, out: number, k0: number, k1: number): void;
  scale_listed(acc: number, P: number, list: number, n: number, r: number): void;
  srp_power(t: number, idx: number, frac: number, P: number, pts: number, count: number, power: number, stamp: number, hop: number): void;
  srp_search(args: number): number;
  window1(x: number, win: number, w: number, n: number): number;
  band_sums(power: number, nf: number, acc: number, w: number, m: number, starts: number, ends: number, nb: number, sp: number, sn: number, sa: number, k0: number, k1: number): void;
  onset_update(power: number, bg: number, nf: number, sm: number, w: number, k0: number, k1: number, q: number, held: number, out: number, count: number): number;
  scale_pack(re: number, im: number, g: number, dst: number, k0: number, k1: number): void;
  accumulate(a: number, b: number, wa: number, ib: number, ar: number, ai: number, k0: number, k1: number, m: number): void;
  band_scores_f32(ar: number, ai: number, br: number, bi: number, two: number, ends: number, nb: number, k0: number, ph: number, out: number, stride: number, needed: number, write: number): void;
  band_scores_f32_1(ar: number, ai: number, ends: number, nb: number, k0: number, ph: number, out: number, stride: number, needed: number, write: number): void;
  derivatives_f32(arA: number, aiA: number, arB: number, aiB: number, two: number, use: number, starts: number, ends: number, nb: number, w0: number, ph: number, out: number): void;
  hop_coherence_1f(a: number, b: number, ia: number, ib: number, k0: number, k1: number, ph: number, out: number): void;
  hop_coherence_t(ut: number, stride: number, nv: number, k0: number, k1: number, ph: number, idx: number, out: number): void;
}

/** The accumulated cross-spectrum of one pair (PairCorrelator's accRe, accIm), as the kernels read it. */
export interface CrossSpectrum {
  readonly accRe: Float64Array;
  readonly accIm: Float64Array;
  readonly maxLag: number;
}

async function loadModule(): Promise<WasmModule | null> {
  // The JavaScript path whole: kernels off, or the fft.js FFT asked for.
  if (process.env.BEARLINE_KERNELS === 'js' || process.env.BEARLINE_FFT === 'fftjs') return null;
  try {
    const binary = fileURLToPath(new URL('./gcc-kernels.wasm', import.meta.url));
    if (existsSync(binary)) return new WebAssembly.Module(readFileSync(binary));
    // Running from src/ (tsx, vitest): assemble the text now (wabt, a development dependency).
    const text = kernelTextPath(import.meta.url);
    if (!existsSync(text)) return null;
    return new WebAssembly.Module(await assembleWat(readFileSync(text, 'utf8'), 'gcc-kernels.wat'));
  } catch {
    return null;
  }
}

const compiled: WasmModule | null = await loadModule();

/** Are the WebAssembly kernels available (compiled, and not switched off by BEARLINE_KERNELS=js or BEARLINE_FFT=fftjs)? */
export function wasmKernelsAvailable(): boolean {
  return compiled !== null;
}

const ALIGN = 16;
/** Numbers in srp_search's argument block. */
export const SRP_SEARCH_ARGS = 19;

export class GccKernels {
  private readonly x: KernelExports;
  private readonly buffer: ArrayBuffer;
  private used = 0;
  private readonly limit: number;
  /** Float32 phasor scratch (the band scores and the hop coherence). */
  private readonly phF: Float32Array;
  /** Float32 phasor scratch of the derivatives (per band). */
  private readonly phD: Float32Array;
  /** Float32 lane sums a kernel writes for the caller to add (the derivatives, a lone pair's hop coherence). */
  private readonly laneSums: Float32Array;
  private bandEnds: Int32Array | null = null;
  private bandStarts: Int32Array | null = null;
  private bands: BandLayout | null = null;

  private constructor(module: WasmModule, bytes: number) {
    const instance = new WebAssembly.Instance(module, {});
    this.x = instance.exports as unknown as KernelExports;
    const mem = this.x.memory;
    const need = bytes + 128 + 4 * derivativePhasorFloats(64) + 64 + 4 * ALIGN;
    const pages = Math.ceil(need / 65536) - mem.buffer.byteLength / 65536;
    if (pages > 0) mem.grow(pages);
    this.buffer = mem.buffer;
    this.limit = this.buffer.byteLength;
    this.used = ALIGN; // offset 0 stays unused: a null pointer means "none"
    this.phF = this.f32(32);
    this.phD = this.f32(derivativePhasorFloats(64));
    this.laneSums = this.f32(16);
  }

  /** Kernels with room for `bytes` of arrays, or null when the WebAssembly kernels are not available. */
  static create(bytes: number): GccKernels | null {
    return compiled === null ? null : new GccKernels(compiled, bytes);
  }

  private take(bytes: number): number {
    const at = this.used;
    this.used = at + Math.ceil(bytes / ALIGN) * ALIGN;
    if (this.used > this.limit) throw new Error('GccKernels: memory reserved for the arrays is too small');
    return at;
  }

  f64(n: number): Float64Array {
    return placed(new Float64Array(this.buffer, this.take(8 * n), n));
  }

  f32(n: number): Float32Array {
    return placed(new Float32Array(this.buffer, this.take(4 * n), n));
  }

  i32(n: number): Int32Array {
    return placed(new Int32Array(this.buffer, this.take(4 * n), n));
  }

  u8(n: number): Uint8Array {
    return placed(new Uint8Array(this.buffer, this.take(n), n));
  }

  /** The bytes to reserve for arrays of these lengths (with alignment). */
  static bytesFor(f64s: number[], f32s: number[] = [], u8s: number[] = []): number {
    let total = 0;
    for (const n of f64s) total += Math.ceil((8 * n) / ALIGN) * ALIGN;
    for (const n of f32s) total += Math.ceil((4 * n) / ALIGN) * ALIGN; // int32 arrays count here too
    for (const n of u8s) total += Math.ceil(n / ALIGN) * ALIGN;
    return total;
  }

  /** The band layout the band kernels use (copied in once). */
  setBands(bands: BandLayout): void {
    if (bands.count > 64) throw new Error('GccKernels: at most 64 bands');
    this.bands = bands;
    const first = this.take(8 * bands.count);
    this.bandEnds = placed(new Int32Array(this.buffer, first, bands.count));
    this.bandStarts = placed(new Int32Array(this.buffer, first + 4 * bands.count, bands.count));
    this.bandEnds.set(bands.end);
    this.bandStarts.set(bands.start);
  }

  // Arrays are passed to the kernels by their address (`addr`, set by f64() and friends: see
  // placed() below). Every array passed must come from this instance (f64(), f32(), i32(), u8());
  // owns() checks that, once, where the arrays are set up (the check on every call cost 3 % of
  // the analysis).

  /** Is this array one of this instance's (a view into its memory, with its address)? */
  owns(view: Float64Array | Float32Array | Int32Array | Uint8Array): boolean {
    return view.buffer === this.buffer && (view as Placed<typeof view>).addr === view.byteOffset;
  }

  /**
   * magnitudes (./gcc-lanes.ts) on a float32 spectrum in this memory: per bin of [k0, k1),
   * power[k] += |X_k|^2 and inv[k] = 1 / |X_k| in float32 (0 for an empty bin), and with `unit`
   * channel c's unit spectrum into it (UnitLayout `layout`).
   */
  magnitudes(spec: Float32Array, power: Float64Array, inv: Float64Array, k0: number, k1: number, unit: Float32Array | null = null, c = 0, layout: UnitLayout | null = null): void {
    const stride = layout ? 4 * layout.stride : 0;
    const half = layout ? 4 * layout.half : 0;
    this.x.magnitudes(f32At(spec), f64At(power), f64At(inv), k0, k1, unit ? f32At(unit) : 0, c, stride, half);
  }

  /**
   * The steered response at the grid points pts[from .. from + count) (SrpDirectionModel.powerAt,
   * ../direction/srp-search.ts): power[g] = sum over pairs p of the correlation table t
   * interpolated at idx[g P + p] + frac[g P + p]; stamp[g] = hop.
   */
  srpPower(t: Float64Array, idx: Int32Array, frac: Float64Array, P: number, pts: Int32Array, from: number, count: number, power: Float64Array, stamp: Int32Array, hop: number): void {
    this.x.srp_power(f64At(t), i32At(idx), f64At(frac), P, i32At(pts) + 4 * from, count, f64At(power), i32At(stamp), hop);
  }

  /**
   * The rest of the steered-response search after the coarse pass (SrpDirectionModel.findCandidates,
   * ../direction/srp-search.ts: coarse maxima, climbs, distinct end points best first). `args`
   * (from i32(SRP_SEARCH_ARGS)) holds, in order, the addresses of the lag table, grid indices and
   * fractions, P, the powers, stamps, the hop, the coarse points and their count, the coarse and
   * fine neighbour lists (start, list, start, list), the starts' capacity, starts and their powers,
   * found points and scores (the outputs), and maxCount. Returns how many were found.
   */
  srpSearch(args: Int32Array): number {
    return this.x.srp_search(i32At(args));
  }

  /** The address of an array in this memory (for argument blocks). */
  address(view: Float64Array | Float32Array | Int32Array | Uint8Array): number {
    return view.byteOffset;
  }

  /**
   * OnsetWeigher.update (./onset.ts) after its first hop: the background, noise floor and
   * smoothed power per bin updated, the weights written; returns the onset strength. `q` holds
   * [invRise, invPresence, floor, 1 - floor, backgroundDecay, 1 - backgroundDecay, floorRise,
   * quietAt, loudAt, heldDecay, bgSum, bgSumKnown]: bgSum is the sum of `bg` over [k0, k1), added bin by
   * bin in order, carried from the last call (which writes it, and bgSumKnown = 1) so that the
   * call need not add up `bg` before its pass; with bgSumKnown = 0 it does. With `held` (null: no quiet search), the same pass also finds
   * the bins that sound has left: the held powers updated, the bins written into `out` in order
   * and their number into count[0].
   */
  onsetUpdate(power: Float64Array, bg: Float64Array, nf: Float64Array, sm: Float64Array, weights: Float64Array, k0: number, k1: number, q: Float64Array, held: Float64Array | null, out: Int32Array, count: Int32Array): number {
    return this.x.onset_update(f64At(power), f64At(bg), f64At(nf), f64At(sm), f64At(weights), k0, k1, f64At(q), held === null ? 0 : f64At(held), i32At(out), i32At(count));
  }

  /**
   * The weight stage's sums over the bands of setBands(): acc[k] = memory * acc[k] + w[k] over
   * [k0, k1), then per band the sums of power, of the noise floor and of acc (bin by bin, in order)
   * into sumPower[b], sumNoise[b], sumAcc[b].
   */
  bandSums(power: Float64Array, noise: Float64Array, acc: Float64Array, w: Float64Array, memory: number, sumPower: Float64Array, sumNoise: Float64Array, sumAcc: Float64Array, k0: number, k1: number): void {
    const bands = this.bands!;
    this.x.band_sums(f64At(power), f64At(noise), f64At(acc), f64At(w), memory, i32At(this.bandStarts!), i32At(this.bandEnds!), bands.count, f64At(sumPower), f64At(sumNoise), f64At(sumAcc), k0, k1);
  }

  /** windowFrame (./window.ts): the frame x (float64, in this memory) times the window into w (float32); returns its sum of squares. */
  window1(x: Float64Array, win: Float64Array, w: Float32Array): number {
    return this.x.window1(f64At(x), f64At(win), f32At(w), win.length);
  }

  /**
   * Bins list[0 .. n) of every cross-spectrum whose accRe and accIm addresses stand in
   * `addresses` (accRe, accIm of each, from crossSpectrumAddresses) times r.
   */
  scaleListed(addresses: Int32Array, list: Int32Array, n: number, r: number): void {
    this.x.scale_listed(i32At(addresses), addresses.length / 2, i32At(list), n, r);
  }

  /** The addresses of the cross-spectra's accRe and accIm (in this memory), for scaleListed. */
  crossSpectrumAddresses(pcs: readonly CrossSpectrum[]): Int32Array {
    const list = this.i32(2 * pcs.length);
    pcs.forEach((pc, p) => {
      list[2 * p] = pc.accRe.byteOffset;
      list[2 * p + 1] = pc.accIm.byteOffset;
    });
    return list;
  }

  /** out[k] = w[k] * inv[k] over [k0, k1). */
  times(w: Float64Array, inv: Float64Array, out: Float64Array, k0: number, k1: number): void {
    this.x.times(f64At(w), f64At(inv), f64At(out), k0, k1);
  }

  /**
   * The input of an inverse FFT of bins [k0, k1) of a pair's cross-spectrum, each bin scaled by
   * binScale[k] (null: unscaled), as float32 interleaved (re, im) into `packed` (n floats): what
   * RealFft.inverseLags writes into PFFFT's buffer (./fft.ts, RealFft.inversePackedLags takes it).
   */
  scalePack(pc: CrossSpectrum, binScale: Float64Array | null, packed: Float32Array, k0: number, k1: number): void {
    this.x.scale_pack(f64At(pc.accRe), f64At(pc.accIm), binScale === null ? 0 : f64At(binScale), f32At(packed), k0, k1);
  }

  /** PairCorrelator.accumulate (./gcc.ts) on float32 spectra in this memory. */
  accumulate(pc: CrossSpectrum, a: Float32Array, b: Float32Array, weightedInvA: Float64Array, invB: Float64Array, k0: number, k1: number, memory: number): void {
    this.x.accumulate(f32At(a), f32At(b), f64At(weightedInvA), f64At(invB), f64At(pc.accRe), f64At(pc.accIm), k0, k1, memory);
  }

  /**
   * addBandScoresLanes (./gcc-lanes.ts, float32): pair `pc`'s band scores at `count` lags
   * lags[lagOffset + i * lagStride] (frame n) added into scoresOut[b * stride + offset + i],
   * then, when `pcB` is given, pcB's at lags[lagOffsetB + i * lagStride] (the two pairs' lanes
   * side by side, added pair after pair as two calls would; without pcB, pc's bins split over
   * two recursions, as addBandScoresLanes does for a pair `alone`); bands whose needed[b] is
   * not above 0 are skipped (null: none). Uses the bands of setBands().
   */
  addBandScores(pc: CrossSpectrum, pcB: CrossSpectrum | null, n: number, lags: Float64Array, lagOffset: number, lagOffsetB: number, lagStride: number, count: number, scoresOut: Float64Array, stride: number, offset: number, needed: Float64Array | null): void {
    const bands = this.bands!;
    const k0 = bands.firstBin;
    const ph = this.phF;
    const b = pcB ?? pc;
    const ends = i32At(this.bandEnds!);
    const need = needed === null ? 0 : f64At(needed);
    const out = f64At(scoresOut);
    for (let i = 0; i < count; i += 4) {
      const w = Math.min(4, count - i);
      if (pcB === null) {
        // a pair alone: its bins over two recursions (addBandScoresLanes with `alone`)
        setSplitPhasorsF32(ph, lags, lagOffset + i * lagStride, lagStride, w, n, k0);
        this.x.band_scores_f32_1(f64At(pc.accRe), f64At(pc.accIm), ends, bands.count, k0, f32At(ph), out + 8 * (offset + i), stride, need, w);
        continue;
      }
      setPhasorsF32(ph, 0, lags, lagOffset + i * lagStride, lagStride, w, n, k0);
      setPhasorsF32(ph, 16, lags, lagOffsetB + i * lagStride, lagStride, w, n, k0);
      this.x.band_scores_f32(f64At(pc.accRe), f64At(pc.accIm), f64At(b.accRe), f64At(b.accIm), 1, ends, bands.count, k0, f32At(ph), out + 8 * (offset + i), stride, need, w);
    }
  }

  /**
   * refineLagLanes (./gcc-lanes.ts) with the derivatives in WebAssembly: pair p of `pcs` from
   * lagsIn[lagOffset + p] into lagsOut[p], Newton steps on the bands flagged in `useBand` (an
   * array from u8()). `d` is scratch of 2 * pcs.length numbers, `active` of pcs.length.
   */
  refineLags(pcs: readonly CrossSpectrum[], n: number, useBand: Uint8Array, lagsIn: Float64Array, lagOffset: number, lagsOut: Float64Array, d: Float64Array, active: Uint8Array, iterations = 2): void {
    const P = pcs.length;
    startNewton(P, lagsIn, lagOffset, lagsOut, active);
    for (let it = 0; it < iterations; it++) {
      // The active pairs two at a time (an odd one alone).
      let pending = -1;
      for (let p = 0; p < P; p++) {
        if (!active[p]) continue;
        if (pending < 0) {
          pending = p;
          continue;
        }
        this.derivatives(pcs[pending]!, pcs[p]!, n, useBand, lagsOut[pending]!, lagsOut[p]!, d, 2 * pending, 2 * p);
        pending = -1;
      }
      if (pending >= 0) this.derivatives(pcs[pending]!, null, n, useBand, lagsOut[pending]!, null, d, 2 * pending, -1);
      if (!newtonStep(P, d, active, lagsOut)) break;
    }
    clampToStart(pcs, lagsIn, lagOffset, lagsOut);
  }

  /** derivativesF32 (./gcc-lanes.ts) of pair pa at lag ta and (unless null) pb at tb, summed into d[oa], d[oa + 1] and d[ob], d[ob + 1]. */
  private derivatives(pa: CrossSpectrum, pb: CrossSpectrum | null, n: number, useBand: Uint8Array, ta: number, tb: number | null, d: Float64Array, oa: number, ob: number): void {
    const bands = this.bands!;
    setDerivativePhasors(this.phD, bands, useBand, ta, tb, n);
    const b = pb ?? pa;
    this.x.derivatives_f32(f64At(pa.accRe), f64At(pa.accIm), f64At(b.accRe), f64At(b.accIm), pb === null ? 0 : 1, u8At(useBand), i32At(this.bandStarts!), i32At(this.bandEnds!), bands.count, (2 * Math.PI) / n, f32At(this.phD), f32At(this.laneSums));
    sumDerivativeLanes(this.laneSums, d, oa, ob);
  }

  /**
   * The swizzle indices of hop_coherence_t for four pairs (lane i: channels a[i], b[i]) into
   * `idx` (32 nv bytes, from u8()): per vector v, the bytes of each lane's channel where it
   * lies in v, 128 (none) elsewhere, for a and then for b.
   */
  static swizzles(a: readonly number[], b: readonly number[], nv: number, idx: Uint8Array): void {
    for (let v = 0; v < nv; v++) {
      for (let i = 0; i < 4; i++) {
        for (let j = 0; j < 4; j++) {
          idx[32 * v + 4 * i + j] = a[i]! >> 2 === v ? 4 * (a[i]! & 3) + j : 128;
          idx[32 * v + 16 + 4 * i + j] = b[i]! >> 2 === v ? 4 * (b[i]! & 3) + j : 128;
        }
      }
    }
  }

  /**
   * hopCoherenceLanes (./gcc-lanes.ts) in WebAssembly: four pairs (their swizzles at `idx`,
   * from swizzles()) at lags lags[at .. at + w) (w of 1 .. 4; spare lanes repeat the last),
   * over bins [k0, k1) of the unit spectra `ut`; the four float32 sums into out.
   */
  hopCoherenceT(ut: Float32Array, layout: UnitLayout, idx: Uint8Array, lags: Float64Array, at: number, w: number, n: number, k0: number, k1: number, out: Float32Array): void {
    setPhasorsF32(this.phF, 0, lags, at, 1, w, n, k0);
    this.x.hop_coherence_t(f32At(ut), 4 * layout.stride, layout.nv, k0, k1, f32At(this.phF), u8At(idx), f32At(out));
  }

  /** hopCoherenceF32 (./gcc-lanes.ts) of a pair alone on float32 spectra in this memory. */
  hopCoherence1(a: Float32Array, b: Float32Array, invA: Float64Array, invB: Float64Array, lag: number, n: number, first: number, end: number): number {
    if (end <= first) return 0;
    setCoherencePhasors(this.phF, lag, n, first);
    const out = this.laneSums;
    this.x.hop_coherence_1f(f32At(a), f32At(b), f64At(invA), f64At(invB), first, end, f32At(this.phF), f32At(out));
    return (out[0]! + out[1]! + out[2]! + out[3]!) / (end - first);
  }
}

/**
 * Arrays from f64() and friends carry their byte offset in the kernels' memory as `addr`: the
 * byteOffset getter costs about 8 ns a read on Node 20 (measured), and a hop passes a few hundred
 * addresses (the 8-mic circle: about 680, some 5 us a hop). One reader per array type, so that
 * each reads one kind of object (a reader shared by all types cost 1-3 % of the analysis).
 */
type Placed<T> = T & { readonly addr: number };

function placed<T extends ArrayBufferView>(view: T): Placed<T> {
  // not enumerable: a view printed or serialised shows its numbers only
  Object.defineProperty(view, 'addr', { value: view.byteOffset, enumerable: false, writable: false });
  return view as Placed<T>;
}

const f64At = (v: Float64Array): number => (v as Placed<Float64Array>).addr;
const f32At = (v: Float32Array): number => (v as Placed<Float32Array>).addr;
const i32At = (v: Int32Array): number => (v as Placed<Int32Array>).addr;
const u8At = (v: Uint8Array): number => (v as Placed<Uint8Array>).addr;

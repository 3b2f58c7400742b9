/**
 * Synthetic hop sequences for the tracker tests, generated at test time from a ground truth:
 * sources with a direction over time and a calling schedule, Gaussian bearing noise, clutter
 * candidates at random directions, dropouts (hops where a calling source gives no candidate),
 * and optionally the mirror fold of a pair or line along any axis. These check the tracker's logic; the
 * acoustic end-to-end checks come with the analysis core.
 */
import { seededUniform } from '../helpers/random.js';
import type { HopObservation } from '../../src/track/types.js';

/** Seeded uniform generator (shared test helper). */
export const rng = seededUniform;

/** Standard normal deviate by Box-Muller (common practice, no source). */
export function gauss(rand: () => number): number {
  const u = Math.max(rand(), 1e-12);
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rand());
}

export interface TruthSource {
  azimuthAt(t: number): number;
  elevationAt?: (t: number) => number;
  /** Calls as [start, end) in seconds. */
  calls: readonly (readonly [number, number])[];
  levelDbfs: number;
}

export interface SynthOptions {
  durationS: number;
  hopS: number;
  seed: number;
  noiseDeg: number;
  /** Probability per hop of one clutter candidate (random direction, low score). */
  clutter: number;
  /** Probability that a calling source yields no candidate in a hop. */
  dropout: number;
  /** Fold azimuths onto [-90, 90] as a two-mic pair along x sees them. */
  mirrored?: boolean;
  /**
   * Fold azimuths onto the half circle centred here (degrees), as a pair or line whose axis lies
   * at mirrorSideDeg + 90 sees them: a source on the other side reads as its mirror image across
   * the axis (common practice, no source: a line resolves only the angle to its axis).
   */
  mirrorSideDeg?: number;
  /** Sources closer than this (deg) come out as one candidate at their mean. */
  mergeDeg?: number;
  /**
   * Two sources calling in one hop within `deg` of each other: the quieter one is read `share`
   * of the way towards the louder (a blend of the two, as the analysis reads a caller whose
   * bands or bins another one shares).
   */
  pull?: { deg: number; share: number };
}

export interface Synth {
  hops: HopObservation[];
  /** Per hop, per candidate: the source index it came from, -1 for clutter. */
  labels: number[][];
}

export function wrap(a: number): number {
  let x = (((a + 180) % 360) + 360) % 360 - 180;
  if (x === -180) x = 180;
  return x;
}

/** What a two-mic pair reports for a true azimuth: its mirror image in front when behind. */
export function fold(az: number): number {
  const a = wrap(az);
  if (a > 90) return 180 - a;
  if (a < -90) return -180 - a;
  return a;
}

/** What a line with its reported half circle centred on sideDeg reports: the mirror image across its axis when on the other side. */
export function foldAbout(az: number, sideDeg: number): number {
  const off = wrap(az - sideDeg);
  if (Math.abs(off) <= 90) return wrap(az);
  return wrap(2 * (sideDeg + 90) - az);
}

export function isCalling(s: TruthSource, t: number): boolean {
  return s.calls.some(([a, b]) => t >= a && t < b);
}

function callStartedAt(s: TruthSource, t: number, hopS: number): boolean {
  return s.calls.some(([a]) => t >= a && t - a < hopS);
}

export function generateHops(sources: readonly TruthSource[], o: SynthOptions): Synth {
  const rand = rng(o.seed);
  const hops: HopObservation[] = [];
  const labels: number[][] = [];
  const n = Math.round(o.durationS / o.hopS);
  for (let k = 0; k < n; k++) {
    const t = (k + 0.5) * o.hopS;
    const calling = sources.map((s, i) => ({ s, i })).filter(({ s }) => isCalling(s, t));
    const cands: { azimuthDeg: number; elevationDeg: number | null; score: number; label: number }[] = [];
    const loudest = calling.reduce((m, c) => Math.max(m, c.s.levelDbfs), -Infinity);
    let onset = 0.05 * rand();
    for (const { s, i } of calling) {
      if (callStartedAt(s, t, o.hopS)) onset = Math.max(onset, 0.9 + 0.1 * rand());
      if (rand() < o.dropout) continue;
      let az = s.azimuthAt(t) + o.noiseDeg * gauss(rand);
      if (o.pull !== undefined && s.levelDbfs < loudest) {
        const louder = calling.find((c) => c.s.levelDbfs === loudest)!.s.azimuthAt(t);
        const d = wrap(louder - s.azimuthAt(t));
        if (Math.abs(d) <= o.pull.deg) az += o.pull.share * d;
      }
      if (o.mirrored) az = fold(az);
      else if (o.mirrorSideDeg !== undefined) az = foldAbout(az, o.mirrorSideDeg);
      else az = wrap(az);
      const el = s.elevationAt ? Math.max(-90, Math.min(90, s.elevationAt(t) + o.noiseDeg * gauss(rand))) : null;
      cands.push({ azimuthDeg: az, elevationDeg: el, score: s.levelDbfs === loudest ? 1 : 0.8, label: i });
    }
    if (o.mergeDeg !== undefined && cands.length === 2) {
      const [a, b] = cands as [(typeof cands)[0], (typeof cands)[0]];
      if (Math.abs(wrap(a.azimuthDeg - b.azimuthDeg)) < o.mergeDeg) {
        cands.length = 0;
        cands.push({ ...a, azimuthDeg: wrap(b.azimuthDeg + wrap(a.azimuthDeg - b.azimuthDeg) / 2), score: 1, label: -2 });
      }
    }
    if (rand() < o.clutter) {
      const az = o.mirrored ? -90 + 180 * rand() : o.mirrorSideDeg !== undefined ? wrap(o.mirrorSideDeg - 90 + 180 * rand()) : -180 + 360 * rand();
      cands.push({ azimuthDeg: az, elevationDeg: null, score: 0.1 + 0.3 * rand(), label: -1 });
    }
    cands.sort((p, q) => q.score - p.score);
    const level = calling.length > 0 ? loudest + 1.5 * gauss(rand) : -70 + 2 * gauss(rand);
    const confidence = calling.length > 0 ? 0.7 + 0.25 * rand() : 0.1 + 0.3 * rand();
    hops.push({
      timeS: t,
      levelDbfs: level,
      // the synthetic noise floor sits at -70 dBFS
      snrDb: Math.max(0, level + 70),
      onset,
      confidence,
      candidates: cands.map(({ azimuthDeg, elevationDeg, score }) => ({ azimuthDeg, elevationDeg, score })),
      bandHz: calling.length > 0 ? [1000, 2000] : null,
    });
    labels.push(cands.map((c) => c.label));
  }
  return { hops, labels };
}

/** Calls of a source repeating `on` seconds of calling and `off` of silence from `phase`. */
export function bursts(phase: number, on: number, off: number, until: number): [number, number][] {
  const out: [number, number][] = [];
  for (let a = phase; a + on <= until; a += on + off) out.push([a, a + on]);
  return out;
}

/**
 * The corpus of the accuracy matrix: field conditions as data. Not a full cross product: a
 * base cell per base array, sweeps along each axis from it (SNR, call type, rumble, bursts,
 * rooms), every array of the geometry sweep, the KEMAR dummy head, and a seeded set of random
 * cross-combinations. Every condition becomes two cells with seeds 2k and 2k + 1: the even
 * seed goes to the `tune` half (defaults are chosen on it), the odd one to `check` (held
 * apart). Every random choice (directions, room placement, cross-combinations) is drawn here
 * from the seed, so a cell is fully described by its definition.
 */
import { makeRng, type Rng } from '../../../src/sim/rng.js';
import type { Vec3 } from '../../../src/geometry/vec3.js';
import { ambiguityOf, angleError } from './angles.js';
import { matrixGeometry, SHORT_NAME, sweptGeometries } from './geometries.js';

export type Family = 'base' | 'snr' | 'call' | 'rumble' | 'bursts' | 'room' | 'geometry' | 'kemar' | 'cross';
export const FAMILIES: readonly Family[] = ['base', 'snr', 'call', 'rumble', 'bursts', 'room', 'geometry', 'kemar', 'cross'];
/**
 * Call types: broadband clicks; band-limited noise centred at 1, 3 and 6 kHz; a harmonic
 * call; an exponential sweep; speech from espeak-ng; broadband white or pink noise (KEMAR only).
 */
export type CallKind = 'clicks' | 'band1k' | 'band3k' | 'band6k' | 'harmonic' | 'sweep' | 'speech' | 'broadband' | 'pink';
/** calls: 0.25 s every 0.8 s; bursts: 0.1-0.3 s with gaps of 0.1-0.5 s; steady: one sound over the whole cell. */
export type ScheduleKind = 'calls' | 'bursts' | 'steady';
export type Split = 'tune' | 'check';

export interface RumbleDef {
  /** Call RMS minus the rumble's total RMS (coherent + incoherent) at the array, dB. */
  readonly callOverRumbleDb: number;
  /** Share of the rumble's power that arrives coherently from its own direction. */
  readonly coherentShare: number;
  /** The rumble lies below this frequency (Hz). */
  readonly cutoffHz: number;
  readonly azimuthDeg: number;
}

export interface RoomDef {
  readonly rt60S: number;
  readonly distanceM: number;
  readonly sizeM: Vec3;
  /** Scene position of the array centre (the array's front points north, +y). */
  readonly arrayAt: Vec3;
}

export interface CellDef {
  /** Short id: family prefix, index within the family, t (tune) or c (check). */
  readonly id: string;
  readonly family: Family;
  /** The condition in words (the same for both seeds). */
  readonly condition: string;
  readonly seed: number;
  readonly split: Split;
  /** In the reduced `--quick` subset. */
  readonly quick: boolean;
  readonly geometry: string;
  readonly call: CallKind;
  /** Call RMS at the array during a call over an independent white noise floor per mic (full band), dB. */
  readonly snrDb: number;
  readonly schedule: ScheduleKind;
  /** Call timing: each call lasts callLengthS; one starts every everyS +- jitterS (start to start). */
  readonly callLengthS: number;
  readonly everyS: number;
  readonly jitterS: number;
  /** Direction of the caller in the array frame. */
  readonly azimuthDeg: number;
  readonly elevationDeg: number;
  readonly rumble: RumbleDef | null;
  readonly room: RoomDef | null;
  readonly durationS: number;
  readonly sampleRate: number;
}

/** Call level at the array (RMS during a call), dBFS. */
export const CALL_DBFS = -26;
/**
 * In rooms, the level of the call's direct sound: the reverberant field adds up to about 15 dB
 * at 4 m with RT60 1 s (beyond the critical distance), and the samples must stay below full scale.
 */
export const ROOM_CALL_DBFS = -40;

/**
 * The direct sound's level of a cell's call at the array, dBFS (the SNR is measured against
 * it). A rumble louder than the call (with its gusts) lowers everything by as much, to keep
 * the samples below full scale.
 */
export function callLevelDbfs(cell: { room: unknown; rumble: { callOverRumbleDb: number } | null }): number {
  return (cell.room ? ROOM_CALL_DBFS : CALL_DBFS) + Math.min(0, cell.rumble?.callOverRumbleDb ?? 0);
}
/** Rumble levels swept: the call 17 and 10 dB above the rumble, level with it, 10 dB below it. */
export const RUMBLE_LEVELS_DB = [17, 10, 0, -10] as const;
export const SNRS_DB = [0, 10, 20, 30] as const;
export const ROOM_RT60S = [0.3, 0.6, 1.0] as const;
export const ROOM_DISTANCES_M = [1, 2, 4] as const;
const ROOM_SIZE: Vec3 = [8, 6.5, 3];
const ROOM_ARRAY_AT: Vec3 = [3.4, 3.0, 1.4];
const ROOM_MARGIN_M = 0.5;
const SWEEP_CALLS: readonly CallKind[] = ['clicks', 'band1k', 'band6k', 'harmonic', 'sweep', 'speech'];
const BURST_CALLS: readonly CallKind[] = ['band3k', 'clicks', 'harmonic', 'sweep'];
const CROSS_CALLS: readonly CallKind[] = ['clicks', 'band1k', 'band3k', 'band6k', 'harmonic', 'sweep', 'speech'];
const BASE_GEOMETRIES = ['pair-20cm', 'square-10cm'] as const;
const CROSS_COUNT = 24;
const CROSS_MASTER_SEED = 20251;
const KEMAR_RATE = 44100;
/** KEMAR directions (ours: + = right), a pair per condition: the tune seed takes the first, check the second. */
const KEMAR_STEADY_AZ: readonly (readonly [number, number])[] = [[-60, -55], [-30, -25], [15, 20], [40, 45], [75, 80]];
const KEMAR_PINK_AZ: readonly (readonly [number, number])[] = [[-35, -20], [55, 65]];
const KEMAR_BURST_AZ: readonly (readonly [number, number])[] = [[-45, -40], [25, 30], [65, 70]];

interface Condition {
  family: Family;
  condition: string;
  geometry: string;
  call: CallKind;
  snrDb: number;
  schedule: ScheduleKind;
  rumbleDb: number | null;
  room: { rt60S: number; distanceM: number } | null;
  kemarAz?: readonly [number, number];
  quick?: boolean;
  /** Cross-combinations are one cell each, with this seed parity. */
  only?: 0 | 1;
}

const CALL_SHORT: Record<CallKind, string> = {
  clicks: 'clicks',
  band1k: 'band 1k',
  band3k: 'band 3k',
  band6k: 'band 6k',
  harmonic: 'harmonic',
  sweep: 'sweep',
  speech: 'speech',
  broadband: 'noise',
  pink: 'pink noise',
};

function describe(c: Omit<Condition, 'family' | 'condition'>): string {
  const parts = [SHORT_NAME[c.geometry] ?? c.geometry, CALL_SHORT[c.call], `${c.snrDb}dB`];
  if (c.schedule !== 'calls') parts.push(c.schedule);
  // The rumble's level against the call's: "rumble -17dB" is 17 dB under the call.
  if (c.rumbleDb !== null) parts.push(`rumble ${c.rumbleDb <= 0 ? '+' : '-'}${Math.abs(c.rumbleDb)}dB`);
  if (c.room) parts.push(`rt${c.room.rt60S} ${c.room.distanceM}m`);
  if (c.kemarAz) parts.push(`az ${c.kemarAz[0]}/${c.kemarAz[1]}`);
  return parts.join(' ');
}

function cond(family: Family, c: Omit<Condition, 'family' | 'condition'>): Condition {
  return { family, condition: describe(c), ...c };
}

/** FNV-1a of a string (common practice, no source): stable seeds from condition names. */
function fnv1a(s: string): number {
  let h = 0x811c9dc5;
  for (let i = 0; i < s.length; i++) {
    h ^= s.charCodeAt(i);
    h = Math.imul(h, 0x01000193) >>> 0;
  }
  return h >>> 0;
}

function conditions(): Condition[] {
  const out: Condition[] = [];
  const base = { call: 'band3k' as CallKind, snrDb: 20, schedule: 'calls' as ScheduleKind, rumbleDb: null, room: null };
  for (const geometry of BASE_GEOMETRIES) {
    const pair = geometry === 'pair-20cm';
    out.push(cond('base', { ...base, geometry, quick: true }));
    for (const snrDb of SNRS_DB) if (snrDb !== base.snrDb) out.push(cond('snr', { ...base, geometry, snrDb, quick: pair && snrDb === 0 }));
    for (const call of SWEEP_CALLS) out.push(cond('call', { ...base, geometry, call, quick: !pair && call === 'speech' }));
    for (const rumbleDb of RUMBLE_LEVELS_DB) {
      out.push(cond('rumble', { ...base, geometry, rumbleDb, quick: (pair && rumbleDb === -10) || (!pair && rumbleDb === 10) }));
    }
    for (const rumbleDb of [17, 0]) out.push(cond('rumble', { ...base, geometry, call: 'harmonic', rumbleDb }));
    for (const rumbleDb of [10, -10]) out.push(cond('rumble', { ...base, geometry, call: 'band1k', rumbleDb }));
    for (const call of BURST_CALLS) out.push(cond('bursts', { ...base, geometry, call, schedule: 'bursts', quick: pair && call === 'band3k' }));
    for (const rt60S of ROOM_RT60S) {
      for (const distanceM of ROOM_DISTANCES_M) {
        out.push(cond('room', { ...base, geometry, room: { rt60S, distanceM }, quick: pair && rt60S === 0.6 && distanceM === 2 }));
      }
    }
    // Broadband calls too, so the rooms are not only seen through a band-limited call.
    for (const rt60S of ROOM_RT60S) out.push(cond('room', { ...base, geometry, call: 'clicks', room: { rt60S, distanceM: 2 } }));
  }
  for (const geometry of sweptGeometries()) {
    if ((BASE_GEOMETRIES as readonly string[]).includes(geometry)) continue;
    out.push(cond('geometry', { ...base, geometry, quick: geometry === 'tetrahedron-10cm' || geometry === 'pair-y-20cm' }));
  }
  KEMAR_STEADY_AZ.forEach((kemarAz, i) => {
    out.push(cond('kemar', { geometry: 'kemar', call: 'broadband', snrDb: 30, schedule: 'steady', rumbleDb: null, room: null, kemarAz, quick: i === 3 }));
  });
  // Pink noise (equal power per octave) over a white mic floor at 10 dB: the low bands carry most of the evidence.
  KEMAR_PINK_AZ.forEach((kemarAz) => {
    out.push(cond('kemar', { geometry: 'kemar', call: 'pink', snrDb: 10, schedule: 'steady', rumbleDb: null, room: null, kemarAz }));
  });
  KEMAR_BURST_AZ.forEach((kemarAz, i) => {
    out.push(cond('kemar', { geometry: 'kemar', call: 'broadband', snrDb: 20, schedule: 'bursts', rumbleDb: null, room: null, kemarAz, quick: i === 0 }));
  });
  const rng = makeRng(CROSS_MASTER_SEED);
  const pick = <T>(list: readonly T[]): T => list[Math.floor(rng.uniform() * list.length)]!;
  const geometries = sweptGeometries();
  for (let i = 0; i < CROSS_COUNT; i++) {
    const c = {
      geometry: pick(geometries),
      call: pick(CROSS_CALLS),
      snrDb: pick(SNRS_DB),
      schedule: (rng.uniform() < 0.3 ? 'bursts' : 'calls') as ScheduleKind,
      rumbleDb: rng.uniform() < 0.5 ? pick(RUMBLE_LEVELS_DB) : null,
      room: rng.uniform() < 0.4 ? { rt60S: pick(ROOM_RT60S), distanceM: pick(ROOM_DISTANCES_M) } : null,
      quick: i < 2,
      only: (i % 2) as 0 | 1,
    };
    out.push({ family: 'cross', condition: `#${i} ${describe(c)}`, ...c });
  }
  return out;
}

const PREFIX: Record<Family, string> = { base: 'base', snr: 'snr', call: 'call', rumble: 'rum', bursts: 'bur', room: 'room', geometry: 'geo', kemar: 'kem', cross: 'x' };

/** Seconds per cell: about 9 calls or 15 bursts each (steady sounds: 4 s). */
function durationOf(c: Condition): number {
  if (c.schedule === 'steady') return 4;
  if (c.call === 'speech') return 12;
  return 8;
}

function timing(c: Condition, rng: Rng, durationS: number): { callLengthS: number; everyS: number; jitterS: number } {
  switch (c.schedule) {
    case 'steady':
      return { callLengthS: durationS - 0.4, everyS: durationS, jitterS: 0 };
    case 'bursts': {
      // Bursts of 0.1 to 0.3 s; gaps of 0.3 +- 0.2 s.
      const callLengthS = Math.round(1000 * (0.1 + 0.2 * rng.uniform())) / 1000;
      return { callLengthS, everyS: Math.round(1000 * (callLengthS + 0.3)) / 1000, jitterS: 0.2 };
    }
    case 'calls':
      return c.call === 'speech' ? { callLengthS: 0.6, everyS: 1.4, jitterS: 0.2 } : { callLengthS: 0.25, everyS: 0.8, jitterS: 0.15 };
  }
}

/** A direction for the caller; in a room, one that keeps the source inside with a margin. */
function callerPlacement(c: Condition, rng: Rng, r: 0 | 1): { az: number; el: number; room: RoomDef | null } {
  if (c.kemarAz) return { az: c.kemarAz[r], el: 0, room: null };
  const el = c.geometry === 'tetrahedron-10cm' ? -30 + 75 * rng.uniform() : 0;
  if (!c.room) return { az: 360 * rng.uniform() - 180, el, room: null };
  for (;;) {
    const az = 360 * rng.uniform() - 180;
    const x = ROOM_ARRAY_AT[0] + c.room.distanceM * Math.sin((az * Math.PI) / 180);
    const y = ROOM_ARRAY_AT[1] + c.room.distanceM * Math.cos((az * Math.PI) / 180);
    if (x > ROOM_MARGIN_M && x < ROOM_SIZE[0] - ROOM_MARGIN_M && y > ROOM_MARGIN_M && y < ROOM_SIZE[1] - ROOM_MARGIN_M) {
      return { az: Math.round(az * 1000) / 1000, el: 0, room: { ...c.room, sizeM: ROOM_SIZE, arrayAt: ROOM_ARRAY_AT } };
    }
  }
}

/** The rumble's direction: at least 40 degrees from the caller as the array resolves directions. */
function rumbleDirection(c: Condition, callerAz: number, rng: Rng): number {
  const amb = ambiguityOf(matrixGeometry(c.geometry));
  for (;;) {
    const az = 360 * rng.uniform() - 180;
    if (angleError({ azimuthDeg: az, elevationDeg: 0 }, { azimuthDeg: callerAz, elevationDeg: 0 }, amb) >= 40) return Math.round(az * 1000) / 1000;
  }
}

let cached: CellDef[] | null = null;

/** Every cell of the matrix, in a fixed order. */
export function allCells(): CellDef[] {
  if (cached) return cached;
  const cells: CellDef[] = [];
  const counters = new Map<Family, number>();
  for (const c of conditions()) {
    const n = (counters.get(c.family) ?? 0) + 1;
    counters.set(c.family, n);
    const reps: (0 | 1)[] = c.only === undefined ? [0, 1] : [c.only];
    for (const r of reps) {
      const seed = 2 * (fnv1a(`${c.family}|${c.condition}`) % 500000) + r;
      const rng = makeRng(seed);
      const place = callerPlacement(c, rng, r);
      const durationS = durationOf(c);
      const time = timing(c, rng, durationS);
      const rumble: RumbleDef | null =
        c.rumbleDb === null ? null : { callOverRumbleDb: c.rumbleDb, coherentShare: 0.5, cutoffHz: 600, azimuthDeg: rumbleDirection(c, place.az, rng) };
      cells.push({
        id: `${PREFIX[c.family]}${String(n).padStart(2, '0')}${seed % 2 === 0 ? 't' : 'c'}`,
        family: c.family,
        condition: c.condition,
        seed,
        split: seed % 2 === 0 ? 'tune' : 'check',
        quick: !!c.quick && seed % 2 === 0,
        geometry: c.geometry,
        call: c.call,
        snrDb: c.snrDb,
        schedule: c.schedule,
        ...time,
        azimuthDeg: Math.round(place.az * 1000) / 1000,
        elevationDeg: Math.round(place.el * 1000) / 1000,
        rumble,
        room: place.room,
        durationS,
        sampleRate: c.geometry === 'kemar' ? KEMAR_RATE : 48000,
      });
    }
  }
  cached = cells;
  return cells;
}

/** The cells of a run: a split (or both), the quick subset or all. */
export function selectCells(split: Split | 'all', quick: boolean): CellDef[] {
  return allCells().filter((c) => (split === 'all' || c.split === split) && (!quick || c.quick));
}

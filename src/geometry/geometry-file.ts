import { readJsonFile } from '../util/read-json-file.js';
import { UsageError } from '../util/errors.js';
import type { ArrayGeometry, Mic } from './array-geometry.js';
import { norm, sub, wrap360, type Vec3 } from './vec3.js';

/** The geometry file of interface.md, as JSON. */
export interface GeometryJson {
  name: string;
  heading_deg?: number;
  description?: string;
  mics: { channel: number; position_m: [number, number, number] }[];
}

const TOP_FIELDS = new Set(['name', 'heading_deg', 'description', 'mics']);
const MIC_FIELDS = new Set(['channel', 'position_m']);
export const MAX_MICS = 8;
/** Two mics closer than this (m) are taken to be a typing mistake. */
const MIN_MIC_DISTANCE_M = 0.001;
/** Largest array extent accepted (m); larger is almost surely a unit mistake. */
const MAX_EXTENT_M = 25;

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/** Validate parsed JSON as a geometry file; every error names the field and the file. */
export function parseGeometry(json: unknown, where: string): ArrayGeometry {
  const bad = (field: string, what: string): never => {
    throw new UsageError(`${where}: ${field} ${what}`);
  };
  if (!isRecord(json)) bad('the file', 'must hold a JSON object with "name" and "mics"');
  const obj = json as Record<string, unknown>;
  for (const key of Object.keys(obj)) {
    if (!TOP_FIELDS.has(key)) bad(`field "${key}"`, `is not a geometry field (known: ${[...TOP_FIELDS].join(', ')})`);
  }
  const name = obj.name;
  if (typeof name !== 'string' || name.trim() === '') bad('"name"', 'must be a non-empty string');
  let headingDeg: number | null = null;
  if (obj.heading_deg !== undefined) {
    const h = obj.heading_deg;
    if (typeof h !== 'number' || !Number.isFinite(h) || h < -360 || h > 360) {
      bad('"heading_deg"', 'must be a number of degrees clockwise from north, between -360 and 360');
    }
    headingDeg = wrap360(h as number);
  }
  if (obj.description !== undefined && typeof obj.description !== 'string') bad('"description"', 'must be a string');
  const micsRaw = obj.mics;
  if (!Array.isArray(micsRaw)) bad('"mics"', 'must be a list of {"channel", "position_m"} objects');
  const list = micsRaw as unknown[];
  if (list.length < 2 || list.length > MAX_MICS) bad('"mics"', `must list 2 to ${MAX_MICS} microphones (found ${list.length})`);
  const mics: Mic[] = list.map((m, i) => {
    const f = `mics[${i}]`;
    if (!isRecord(m)) bad(f, 'must be an object with "channel" and "position_m"');
    const rec = m as Record<string, unknown>;
    for (const key of Object.keys(rec)) {
      if (!MIC_FIELDS.has(key)) bad(`${f}.${key}`, 'is not a microphone field (known: channel, position_m)');
    }
    const ch = rec.channel;
    if (typeof ch !== 'number' || !Number.isInteger(ch) || ch < 0) bad(`${f}.channel`, 'must be a whole number from 0');
    const p = rec.position_m;
    if (!Array.isArray(p) || p.length !== 3 || !p.every((x) => typeof x === 'number' && Number.isFinite(x))) {
      bad(`${f}.position_m`, 'must be [x, y, z] in metres (x right, y front, z up)');
    }
    const pos = p as number[];
    if (pos.some((x) => Math.abs(x) > MAX_EXTENT_M)) bad(`${f}.position_m`, `is more than ${MAX_EXTENT_M} m from the array centre: positions are in metres`);
    return { channel: ch as number, position: [pos[0]!, pos[1]!, pos[2]!] as Vec3 };
  });
  const sorted = [...mics].sort((a, b) => a.channel - b.channel);
  sorted.forEach((m, i) => {
    if (m.channel !== i) {
      const dup = sorted.filter((x) => x.channel === m.channel).length > 1;
      bad('"mics"', dup ? `has channel ${m.channel} twice` : `must use channels 0 to ${sorted.length - 1}, each once (channel ${i} is missing)`);
    }
  });
  for (let a = 0; a < sorted.length; a++) {
    for (let b = a + 1; b < sorted.length; b++) {
      if (norm(sub(sorted[a]!.position, sorted[b]!.position)) < MIN_MIC_DISTANCE_M) {
        bad('"mics"', `has channels ${a} and ${b} at the same place`);
      }
    }
  }
  return { name: name as string, headingDeg, mics: sorted };
}

export function loadGeometryFile(path: string): ArrayGeometry {
  return parseGeometry(readJsonFile(path, 'geometry file', '--array'), `geometry file ${path}`);
}

export function geometryToJson(g: ArrayGeometry): GeometryJson {
  const out: GeometryJson = {
    name: g.name,
    mics: g.mics.map((m) => ({ channel: m.channel, position_m: [m.position[0], m.position[1], m.position[2]] })),
  };
  if (g.headingDeg !== null) out.heading_deg = g.headingDeg;
  return out;
}

/** Largest and smallest mic distance of an array (m). */
export function micDistanceRange(g: ArrayGeometry): { min: number; max: number } {
  let min = Infinity;
  let max = 0;
  for (let a = 0; a < g.mics.length; a++) {
    for (let b = a + 1; b < g.mics.length; b++) {
      const d = norm(sub(g.mics[a]!.position, g.mics[b]!.position));
      min = Math.min(min, d);
      max = Math.max(max, d);
    }
  }
  return { min, max };
}

/**
 * Check a geometry against a stream: channel count must match, and the array must span
 * at least two samples of delay at the stream's rate (else delays cannot be resolved).
 */
export function checkGeometryForStream(g: ArrayGeometry, channels: number, sampleRate: number, speedOfSound: number, where: string): void {
  if (g.mics.length !== channels) {
    throw new UsageError(
      `${where} has ${channels} channel${channels === 1 ? '' : 's'} but the geometry "${g.name}" lists ${g.mics.length} mics: give a geometry with one mic per channel`,
    );
  }
  const { max } = micDistanceRange(g);
  const lagSamples = (max / speedOfSound) * sampleRate;
  if (lagSamples < 2) {
    throw new UsageError(
      `the array "${g.name}" spans ${(max * 100).toFixed(1)} cm, under two samples of delay at ${sampleRate} Hz: use a wider spacing or a higher sample rate`,
    );
  }
}

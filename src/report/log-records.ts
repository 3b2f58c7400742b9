/**
 * The lines of event logs, as the report reads them: JSON Lines or CSV (with the header the
 * record writer and the station's log write), event records and gap records. Pure: one line
 * in, one item out; a line that is neither is a UsageError naming the file and line.
 */
import { UsageError } from '../util/errors.js';
import { csvSplit } from '../records/csv.js';
import { checkEventRecord } from '../locate/events.js';
import { parseUtcSeconds } from '../locate/time.js';

/** One call (an event record) on the report's time base. */
export interface CallItem {
  readonly kind: 'call';
  /** Onset: UTC seconds since 1970 when `absolute`, else seconds of stream time. */
  readonly timeS: number;
  readonly absolute: boolean;
  readonly durationS: number;
  readonly azimuthDeg: number;
  /** Compass bearing when the record has one. */
  readonly bearingDeg: number | null;
  readonly elevationDeg: number | null;
  readonly track: number;
  readonly confidence: number;
  readonly station: string | null;
  /** The mirror ambiguity the record names (a pair or line), else null. */
  readonly mirror: string | null;
  /** The call's band, Hz, when the record has one. */
  readonly bandHz: readonly [number, number] | null;
}

/** A stretch of lost capture (a gap record). */
export interface GapItem {
  readonly kind: 'gap';
  readonly startS: number;
  readonly endS: number;
  readonly absolute: boolean;
  readonly reason: string;
}

export type LogItem = CallItem | GapItem;

export type LogFormat = 'jsonl' | 'csv';

/** Fields of a record read from CSV cells: numbers where the column holds numbers. */
const TEXT_COLUMNS = new Set(['utc', 'mirror', 'station', 'gap']);

function fromCsv(header: readonly string[], cells: readonly string[], where: string): Record<string, unknown> {
  if (cells.length !== header.length) {
    throw new UsageError(`${where}: ${cells.length} fields but the header has ${header.length}; the line is cut or the file mixes two kinds of records`);
  }
  const o: Record<string, unknown> = {};
  for (let i = 0; i < header.length; i++) {
    const name = header[i]!;
    const cell = cells[i]!;
    if (cell === '') continue;
    o[name] = TEXT_COLUMNS.has(name) ? cell : Number(cell);
  }
  if (typeof o.band_lo_hz === 'number' && typeof o.band_hi_hz === 'number') o.band_hz = [o.band_lo_hz, o.band_hi_hz];
  return o;
}

function utcOf(o: Record<string, unknown>, where: string): number | null {
  if (o.utc === undefined) return null;
  const t = typeof o.utc === 'string' ? parseUtcSeconds(o.utc) : null;
  if (t === null) throw new UsageError(`${where}: field 'utc' must be an ISO 8601 UTC time such as "2026-05-01T21:00:03.125Z"`);
  return t;
}

function gapItem(o: Record<string, unknown>, where: string): GapItem {
  const { start_s: start, end_s: end } = o;
  if (typeof start !== 'number' || typeof end !== 'number' || !Number.isFinite(start) || !Number.isFinite(end) || end < start) {
    throw new UsageError(`${where}: a gap record needs numbers start_s <= end_s`);
  }
  const utc = utcOf(o, where);
  const startS = utc ?? start;
  return { kind: 'gap', startS, endS: startS + (end - start), absolute: utc !== null, reason: String(o.gap) };
}

function item(o: Record<string, unknown>, where: string): LogItem {
  if (o.gap !== undefined) return gapItem(o, where);
  if (o.start_s === undefined && o.time_s !== undefined) {
    throw new UsageError(`${where}: this is a frame record (time_s, one per hop); the report reads event logs: give the events file (scan without --frames, or the station's *.events.* files)`);
  }
  const r = checkEventRecord(o, where);
  const utc = utcOf(o, where);
  const elevation = typeof r.elevation_deg === 'number' && Number.isFinite(r.elevation_deg) ? r.elevation_deg : null;
  return {
    kind: 'call',
    timeS: utc ?? r.start_s,
    absolute: utc !== null,
    durationS: Math.max(0, r.end_s - r.start_s),
    azimuthDeg: r.azimuth_deg,
    bearingDeg: typeof r.bearing_deg === 'number' ? r.bearing_deg : null,
    elevationDeg: elevation,
    track: r.track,
    confidence: r.confidence,
    station: r.station ?? null,
    mirror: typeof r.mirror === 'string' ? r.mirror : null,
    bandHz: r.band_hz ?? null,
  };
}

/**
 * Reads the lines of one log file in order. For CSV the first line is the header. Returns
 * null for a blank line or the header.
 */
export class LogLineReader {
  private header: string[] | null = null;

  constructor(
    readonly format: LogFormat,
    private readonly source: string,
  ) {}

  read(line: string, lineNo: number): LogItem | null {
    const text = line.trim();
    if (text === '') return null;
    const where = `${this.source} line ${lineNo}`;
    if (this.format === 'jsonl') {
      let parsed: unknown;
      try {
        parsed = JSON.parse(text);
      } catch {
        throw new UsageError(`${where}: not valid JSON; each line of a JSON Lines log must be one record (give CSV logs with a .csv name)`);
      }
      if (typeof parsed !== 'object' || parsed === null || Array.isArray(parsed)) throw new UsageError(`${where}: not a record (expected {"start_s": ..., "azimuth_deg": ...})`);
      return item(parsed as Record<string, unknown>, where);
    }
    const cells = csvSplit(text);
    if (cells === null) throw new UsageError(`${where}: a quoted field is not closed; the line is cut`);
    if (this.header === null) {
      if (!cells.includes('gap') && !(cells.includes('start_s') && cells.includes('azimuth_deg'))) {
        if (cells.includes('time_s')) throw new UsageError(`${where}: this CSV holds frame records (time_s); the report reads event logs: give the events file`);
        throw new UsageError(`${where}: not a header of event or gap records (expected start_s, end_s, azimuth_deg, ...)`);
      }
      this.header = cells.map((c) => c.trim());
      return null;
    }
    return item(fromCsv(this.header, cells, where), where);
  }
}

/** The format of a log from its name (.csv, .jsonl/.json) or, failing that, its first line. */
export function formatOf(name: string, firstLine: string): LogFormat {
  if (/\.csv$/i.test(name)) return 'csv';
  if (/\.jsonl?$/i.test(name)) return 'jsonl';
  return firstLine.trimStart().startsWith('{') ? 'jsonl' : 'csv';
}

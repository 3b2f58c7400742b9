/**
 * How the user names bench takes. Pure parsers; every error names the bad piece.
 *
 * On the command line, one take per recording: `AZ=REC.wav` (a horizontal direction) or
 * `AZ,EL=REC.wav`, degrees in the array frame (azimuth 0 = front, +90 = right; elevation
 * +90 = up).
 *
 * A span list (a text file beside one long recording), one take per line:
 *     FROM_S  TO_S  AZ_DEG  [EL_DEG]
 * seconds from the start of the recording, blank lines and `#` comments allowed.
 */
import { UsageError } from '../util/errors.js';

export interface TakeDirection {
  azimuthDeg: number;
  elevationDeg: number | null;
}

export interface TakeArgument extends TakeDirection {
  path: string;
}

export interface TakeSpan extends TakeDirection {
  fromS: number;
  toS: number;
  line: number;
}

const NUM = '[-+]?(?:\\d+\\.?\\d*|\\.\\d+)(?:[eE][-+]?\\d+)?';
const TAKE_RE = new RegExp(`^(${NUM})(?:,(${NUM}))?=(.+)$`);

function direction(az: number, el: number | null, where: string): TakeDirection {
  if (!(az >= -180 && az <= 360)) throw new UsageError(`${where}: azimuth ${az} must be in degrees from -180 to 360 (0 = front, +90 = right)`);
  if (el !== null && !(el >= -90 && el <= 90)) throw new UsageError(`${where}: elevation ${el} must be in degrees from -90 to 90`);
  const wrapped = az > 180 ? az - 360 : az;
  return { azimuthDeg: wrapped, elevationDeg: el };
}

export function parseTakeArgument(arg: string): TakeArgument {
  const m = TAKE_RE.exec(arg);
  if (!m) {
    throw new UsageError(`take '${arg}' must be AZ=REC.wav or AZ,EL=REC.wav (the source direction in degrees, then the recording), e.g. -30=left30.wav`);
  }
  const dir = direction(Number(m[1]), m[2] === undefined ? null : Number(m[2]), `take '${arg}'`);
  return { ...dir, path: m[3]! };
}

export function parseSpanList(text: string, where: string): TakeSpan[] {
  const spans: TakeSpan[] = [];
  text.split(/\r?\n/).forEach((raw, i) => {
    const line = raw.replace(/#.*$/, '').trim();
    if (line === '') return;
    const at = `${where} line ${i + 1}`;
    const parts = line.split(/\s+/);
    const nums = parts.map(Number);
    if (parts.length < 3 || parts.length > 4 || nums.some((n) => !Number.isFinite(n))) {
      throw new UsageError(`${at}: '${line}' must be FROM_S TO_S AZ_DEG [EL_DEG] (four numbers at most)`);
    }
    const [from, to, az, el] = nums as [number, number, number, number | undefined];
    if (!(from >= 0 && to > from)) throw new UsageError(`${at}: the span ${from} to ${to} s must start at 0 or later and end after it starts`);
    spans.push({ ...direction(az, el ?? null, at), fromS: from, toS: to, line: i + 1 });
  });
  if (spans.length === 0) throw new UsageError(`${where} lists no spans: write one line per take, FROM_S TO_S AZ_DEG [EL_DEG]`);
  return spans;
}

/**
 * What the bench check gives back: the JSON result, the readable text report and the
 * corrected geometry file. Pure (strings and objects out; the CLI writes them).
 */
import type { ArrayGeometry } from '../geometry/array-geometry.js';
import type { GeometryJson } from '../geometry/geometry-file.js';
import type { BenchFit } from './array-fit.js';
import { pairResiduals, residualsUs, type PairResidual } from './tdoa-plot.js';
import { overallStatus, type CheckItem } from './verdict.js';

export interface BenchContext {
  geometry: ArrayGeometry;
  sampleRate: number;
  speedOfSound: number;
}

const round = (x: number, digits: number): number => (Number.isFinite(x) ? Number(x.toPrecision(digits)) : x);
const r9 = (x: number): number => round(x, 9);

export interface BenchResultJson {
  array: string;
  channels: number;
  sample_rate_hz: number;
  speed_of_sound_m_s: number;
  verdict: string;
  spacing_m: number | null;
  spacing_sigma_m: number | null;
  spacing_file_m: number | null;
  positions_m: number[][] | null;
  positions_sigma_m: number[][] | null;
  file_positions_m: number[][];
  channel_map: number[];
  channels_swapped: boolean | null;
  offset_s: number[];
  offset_sigma_s: number[];
  polarity_inverted: boolean[];
  gain_db: number[];
  gain_sigma_db: number[];
  drift_ppm: number[] | null;
  drift_sigma_ppm: number[] | null;
  residual_deg_rms: number | null;
  residual_before_deg_rms: number | null;
  tdoa_residual_rms_s: number;
  /** Per pair, measured minus expected (file geometry) tdoa over the takes, microseconds: the residual plot's rows. */
  pair_residuals: PairResidual[];
  takes: {
    label: string;
    azimuth_deg: number;
    elevation_deg: number | null;
    expected_tdoa_s: number[];
    measured_tdoa_s: (number | null)[];
    fitted_tdoa_s: number[];
    /** Measured minus expected tdoa per pair, microseconds (null where not measured). */
    residual_tdoa_us: (number | null)[];
    error_before_deg: number | null;
    error_deg: number | null;
    segments_used: number;
    segments: number;
  }[];
  checks: { item: string; status: string; value: number | null; sigma: number | null; tolerance: number | null; unit: string }[];
  notes: string[];
}

const finiteOrNull = (x: number): number | null => (Number.isFinite(x) ? x : null);

export function resultJson(fit: BenchFit, items: readonly CheckItem[], ctx: BenchContext): BenchResultJson {
  // residualsUs is per pair, then take; the takes list wants per take, then pair.
  const byPair = residualsUs(fit);
  const residuals = fit.takes.map((_, t) => byPair.map((row) => row[t]!));
  return {
    array: ctx.geometry.name,
    channels: fit.channels,
    sample_rate_hz: ctx.sampleRate,
    speed_of_sound_m_s: round(ctx.speedOfSound, 6),
    verdict: overallStatus(items),
    spacing_m: fit.spacing ? r9(fit.spacing.value) : null,
    spacing_sigma_m: fit.spacing ? round(fit.spacing.sigma, 3) : null,
    spacing_file_m: fit.spacingFileM,
    positions_m: fit.positions ? fit.positions.map((p) => p.map(r9)) : null,
    positions_sigma_m: fit.positionSigma ? fit.positionSigma.map((p) => p.map((x) => round(x, 3))) : null,
    file_positions_m: fit.filePositions.map((p) => [...p]),
    channel_map: fit.channelMap,
    channels_swapped: fit.swapped,
    offset_s: fit.offset.map((o) => round(o.value, 6)),
    offset_sigma_s: fit.offset.map((o) => round(o.sigma, 3)),
    polarity_inverted: fit.polarityInverted,
    gain_db: fit.gainDb.map((g) => round(g.value, 6)),
    gain_sigma_db: fit.gainDb.map((g) => round(g.sigma, 3)),
    drift_ppm: fit.drift ? fit.drift.map((d) => round(d.value, 6)) : null,
    drift_sigma_ppm: fit.drift ? fit.drift.map((d) => round(d.sigma, 3)) : null,
    residual_deg_rms: finiteOrNull(round(fit.residualDegRms, 6)),
    residual_before_deg_rms: finiteOrNull(round(fit.residualBeforeDegRms, 6)),
    tdoa_residual_rms_s: round(fit.residualRmsS, 4),
    pair_residuals: pairResiduals(fit),
    takes: fit.takes.map((t, ti) => ({
      label: t.label,
      azimuth_deg: t.azimuthDeg,
      elevation_deg: t.elevationDeg,
      expected_tdoa_s: t.expectedS.map(r9),
      measured_tdoa_s: t.measuredS.map((x) => finiteOrNull(r9(x))),
      fitted_tdoa_s: t.fittedS.map(r9),
      residual_tdoa_us: residuals[ti]!.map((us) => finiteOrNull(Math.round(us * 1000) / 1000)),
      error_before_deg: finiteOrNull(round(t.errorBeforeDeg, 6)),
      error_deg: finiteOrNull(round(t.errorAfterDeg, 6)),
      segments_used: t.segmentsUsed,
      segments: t.segments,
    })),
    checks: items.map((i) => ({ item: i.item, status: i.status, value: i.value === null ? null : round(i.value, 6), sigma: i.sigma === null ? null : round(i.sigma, 3), tolerance: i.tolerance, unit: i.unit })),
    notes: fit.notes,
  };
}

/** A value with its unit scaled for reading (us for seconds, mm for metres). */
function show(v: number | null, sigma: number | null, unit: string): string {
  if (v === null) return '-';
  const [k, u, d] = unit === 's' ? [1e6, 'us', 2] : unit === 'm' ? [1e3, 'mm', 2] : [1, unit, unit === 'deg' ? 2 : 2];
  const pm = sigma !== null && sigma > 0 ? ` +-${(sigma * k).toFixed(d)}` : '';
  return `${(v * k).toFixed(d)}${pm} ${u}`;
}

function showTol(t: number | null, unit: string): string {
  if (t === null) return '';
  return show(t, null, unit);
}

const MARK: Record<string, string> = { pass: 'pass', warn: 'WARN', fail: 'FAIL', 'not measured': '--' };

export function textReport(fit: BenchFit, items: readonly CheckItem[], ctx: BenchContext): string {
  const lines: string[] = [];
  const M = fit.channels;
  lines.push(`Bench check of "${ctx.geometry.name}": ${M} mics, ${fit.takes.length} take${fit.takes.length === 1 ? '' : 's'}, ${ctx.sampleRate} Hz, c = ${ctx.speedOfSound.toFixed(1)} m/s`);
  lines.push('');
  const w0 = Math.max(18, ...items.map((i) => i.item.length + 2));
  const rows = items.map((i) => [i.item, show(i.value, i.sigma, i.unit), i.tolerance === null ? '' : `<= ${showTol(i.tolerance, i.unit)}`, MARK[i.status]!, i.hint]);
  const w1 = Math.max(14, ...rows.map((r) => r[1]!.length + 2));
  const w2 = Math.max(10, ...rows.map((r) => r[2]!.length + 2));
  lines.push(`  ${'item'.padEnd(w0)}${'deviation'.padEnd(w1)}${'allowed'.padEnd(w2)}${'result'.padEnd(8)}meaning`);
  for (const r of rows) lines.push(`  ${r[0]!.padEnd(w0)}${r[1]!.padEnd(w1)}${r[2]!.padEnd(w2)}${r[3]!.padEnd(8)}${r[4]}`);
  lines.push('');
  lines.push(`  overall: ${MARK[overallStatus(items)]}`);
  lines.push('');
  lines.push('Takes (direction error with the file geometry -> after the fit):');
  const tw = Math.max(10, ...fit.takes.map((t) => t.label.length + 2));
  for (const t of fit.takes) {
    const dir = t.elevationDeg === null ? `az ${t.azimuthDeg}` : `az ${t.azimuthDeg}, el ${t.elevationDeg}`;
    const e = (x: number): string => (Number.isFinite(x) ? x.toFixed(2) : '-');
    lines.push(`  ${t.label.padEnd(tw)}${dir.padEnd(20)}${e(t.errorBeforeDeg).padStart(7)} -> ${e(t.errorAfterDeg).padStart(6)} deg   ${t.segmentsUsed}/${t.segments} segments`);
  }
  lines.push('');
  lines.push(`Delay residual after the fit: ${(fit.residualRmsS * 1e6).toFixed(3)} us rms over ${fit.rowsUsed} segment delays${fit.rowsRejected ? ` (${fit.rowsRejected} outliers left out)` : ''}.`);
  lines.push('Offsets, gains, polarity and drift are relative to channel 0; +- is one standard deviation.');
  for (const n of fit.notes) lines.push(`Note: ${n}.`);
  return lines.join('\n') + '\n';
}

/** The geometry with the fitted positions (channel c at the position fitted for channel c). */
export function correctedGeometry(fit: BenchFit, geometry: ArrayGeometry): GeometryJson | null {
  if (!fit.positions) return null;
  const out: GeometryJson = {
    name: `${geometry.name}-checked`,
    description: `mic positions fitted by bearline check-array from ${fit.takes.length} takes (file: ${geometry.name})`,
    mics: fit.positions.map((p, c) => ({ channel: c, position_m: [r9(p[0]), r9(p[1]), r9(p[2])] })),
  };
  if (geometry.headingDeg !== null) out.heading_deg = geometry.headingDeg;
  return out;
}

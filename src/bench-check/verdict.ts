/**
 * Pass / warn / fail per item of a bench fit against the user's tolerances: at or under the
 * tolerance passes, up to warnFactor times it warns, beyond fails. Channel order and polarity
 * pass or fail. Pure.
 */
import { norm, sub } from '../geometry/vec3.js';
import type { BenchFit } from './array-fit.js';
import type { BenchCheckOptions } from './options.js';

export type CheckStatus = 'pass' | 'warn' | 'fail' | 'not measured';

export interface CheckItem {
  /** What is checked, e.g. "offset ch1". */
  item: string;
  status: CheckStatus;
  /** The measured deviation in the item's unit (null when not measured). */
  value: number | null;
  sigma: number | null;
  tolerance: number | null;
  unit: string;
  /** One line saying what the value means or what to do. */
  hint: string;
}

const ORDER: Record<CheckStatus, number> = { 'not measured': 0, pass: 1, warn: 2, fail: 3 };

function graded(value: number, tol: number, opts: BenchCheckOptions): CheckStatus {
  const v = Math.abs(value);
  if (v <= tol) return 'pass';
  return v <= tol * opts.warnFactor ? 'warn' : 'fail';
}

export function checkItems(fit: BenchFit, opts: BenchCheckOptions): CheckItem[] {
  const items: CheckItem[] = [];
  const M = fit.channels;
  if (fit.mode === 'spacing') {
    const s = fit.spacing;
    const err = s ? s.value - fit.spacingFileM! : null;
    items.push({
      item: 'spacing',
      status: err === null ? 'not measured' : graded(err, opts.positionTolM, opts),
      value: err,
      sigma: s?.sigma ?? null,
      tolerance: opts.positionTolM,
      unit: 'm',
      hint: s ? `effective spacing ${s.value.toFixed(4)} m, file ${fit.spacingFileM!.toFixed(4)} m` : 'record takes from more directions',
    });
  } else {
    for (let c = 0; c < M; c++) {
      const p = fit.positions?.[c];
      const err = p ? norm(sub(p, fit.filePositions[fit.channelMap[c]!]!)) : null;
      const sg = fit.positionSigma?.[c];
      items.push({
        item: `position ch${c}`,
        status: err === null ? 'not measured' : graded(err, opts.positionTolM, opts),
        value: err,
        sigma: sg ? Math.hypot(sg[0], sg[1], sg[2]) : null,
        tolerance: opts.positionTolM,
        unit: 'm',
        hint: p ? `at (${p.map((x) => x.toFixed(4)).join(', ')}) m` : 'record takes from more directions',
      });
    }
  }
  items.push({
    item: 'channel order',
    status: fit.swapped === null ? 'not measured' : fit.swapped ? 'fail' : 'pass',
    value: null,
    sigma: null,
    tolerance: null,
    unit: '',
    hint:
      fit.swapped === null
        ? 'needs the geometry fitted'
        : fit.swapped
          ? `channels hold the mics drawn as ${fit.channelMap.map((m, c) => `ch${c}<-mic${m}`).filter((_, c) => fit.channelMap[c] !== c).join(', ')}: fix the wiring or use the corrected geometry`
          : 'as in the file',
  });
  for (let c = 1; c < M; c++) {
    const o = fit.offset[c]!;
    items.push({ item: `offset ch${c}`, status: graded(o.value, opts.offsetTolS, opts), value: o.value, sigma: o.sigma, tolerance: opts.offsetTolS, unit: 's', hint: o.value >= 0 ? 'later than ch0' : 'earlier than ch0' });
  }
  for (let c = 1; c < M; c++) {
    const inv = fit.polarityInverted[c]!;
    items.push({
      item: `polarity ch${c}`,
      status: inv ? 'fail' : 'pass',
      value: null,
      sigma: null,
      tolerance: null,
      unit: '',
      hint: `${inv ? 'inverted against ch0' : 'same as ch0'} (${(fit.polaritySupport[c]! * 100).toFixed(0)} % of peaks agree)`,
    });
  }
  for (let c = 1; c < M; c++) {
    const g = fit.gainDb[c]!;
    items.push({ item: `gain ch${c}`, status: graded(g.value, opts.gainTolDb, opts), value: g.value, sigma: g.sigma, tolerance: opts.gainTolDb, unit: 'dB', hint: g.value >= 0 ? 'louder than ch0' : 'quieter than ch0' });
  }
  for (let c = 1; c < M; c++) {
    const d = fit.drift?.[c];
    items.push({
      item: `drift ch${c}`,
      status: d ? graded(d.value, opts.driftTolPpm, opts) : 'not measured',
      value: d?.value ?? null,
      sigma: d?.sigma ?? null,
      tolerance: opts.driftTolPpm,
      unit: 'ppm',
      hint: d ? (d.value >= 0 ? 'falls behind ch0 over time (its sample clock runs fast)' : 'runs ahead of ch0 over time (its sample clock runs slow)') : 'needs a take as long as --drift-min-span',
    });
  }
  const r = fit.residualDegRms;
  items.push({
    item: 'direction residual',
    status: Number.isFinite(r) ? graded(r, opts.residualTolDeg, opts) : 'not measured',
    value: Number.isFinite(r) ? r : null,
    sigma: null,
    tolerance: opts.residualTolDeg,
    unit: 'deg',
    hint: `rms over the takes after the fit (${fit.residualBeforeDegRms.toFixed(2)} deg with the file's geometry)`,
  });
  return items;
}

/** The worst status among the measured items. */
export function overallStatus(items: readonly CheckItem[]): CheckStatus {
  let worst: CheckStatus = 'not measured';
  for (const i of items) if (ORDER[i.status] > ORDER[worst]) worst = i.status;
  return worst;
}

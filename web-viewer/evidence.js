// The delay map, drawn: a ring of evidence round the dial (the steered response over azimuth,
// brighter where more pairs agree on a direction) and, for one chosen pair, its correlation
// over the physically possible lags with the hop's chosen delay marked. Messages of type
// 'maps' (sent only to viewers that subscribe with "maps": true).

import { EVIDENCE } from './palette.js';

/** Per azimuth cell the strongest evidence over the elevation rows, in [0, 1]. */
export function ringValues(map) {
  const dm = map && map.direction_map;
  if (!dm || !Array.isArray(dm.values) || dm.values.length === 0) return null;
  const rows = dm.values;
  const n = rows[0].length;
  const out = new Float32Array(n);
  for (const row of rows) for (let i = 0; i < n; i++) out[i] = Math.max(out[i], row[i] ?? 0);
  return { first: dm.azimuth_first_deg, step: dm.azimuth_step_deg, values: out };
}

/** The ring between radii r0 and r1 (az 0 up, clockwise), its brightness following the evidence. */
export function drawEvidenceRing(ctx, cx, cy, r0, r1, ring, fade) {
  if (!ring) return;
  const [er, eg, eb] = EVIDENCE;
  const half = (ring.step * Math.PI) / 360;
  for (let i = 0; i < ring.values.length; i++) {
    const v = ring.values[i];
    if (v <= 0.02) continue;
    const mid = ((ring.first + i * ring.step - 90) * Math.PI) / 180;
    // Cubed: the strongest directions stand out of a broad response (low calls on a small array).
    ctx.fillStyle = `rgba(${er},${eg},${eb},${(0.95 * v * v * v * fade).toFixed(3)})`;
    ctx.beginPath();
    ctx.arc(cx, cy, r1, mid - half - 0.004, mid + half + 0.004);
    ctx.arc(cx, cy, r0, mid + half + 0.004, mid - half - 0.004, true);
    ctx.closePath();
    ctx.fill();
  }
}

/** The chosen pair's correlation over its lags (microseconds), the hop's delay as a marker. */
export function drawLagPlot(ctx, w, h, pairMap, chosenS) {
  const axisH = 16;
  const top = 6;
  const ph = h - axisH - top;
  ctx.font = '12px system-ui, sans-serif';
  if (!pairMap) {
    ctx.fillStyle = '#86a194';
    ctx.textBaseline = 'middle';
    ctx.fillText('waiting for the delay map…', 0, h / 2);
    return null;
  }
  const vals = pairMap.values;
  const n = vals.length;
  const lagOf = (i) => pairMap.first_lag_s + i * pairMap.lag_step_s;
  const span = Math.max(Math.abs(lagOf(0)), Math.abs(lagOf(n - 1)), 1e-6);
  const x = (lag) => w / 2 + (lag / span) * (w / 2 - 4);
  const y = (v) => top + ph * (1 - v);
  ctx.strokeStyle = '#284036';
  ctx.beginPath();
  ctx.moveTo(x(0), top);
  ctx.lineTo(x(0), top + ph);
  ctx.moveTo(0, y(0));
  ctx.lineTo(w, y(0));
  ctx.stroke();
  const [er, eg, eb] = EVIDENCE;
  ctx.fillStyle = `rgba(${er},${eg},${eb},0.18)`;
  ctx.strokeStyle = `rgb(${er},${eg},${eb})`;
  ctx.lineWidth = 2;
  ctx.beginPath();
  ctx.moveTo(x(lagOf(0)), y(0));
  for (let i = 0; i < n; i++) ctx.lineTo(x(lagOf(i)), y(Math.max(0, vals[i])));
  ctx.lineTo(x(lagOf(n - 1)), y(0));
  ctx.closePath();
  ctx.fill();
  ctx.beginPath();
  for (let i = 0; i < n; i++) (i === 0 ? ctx.moveTo : ctx.lineTo).call(ctx, x(lagOf(i)), y(Math.max(0, vals[i])));
  ctx.stroke();
  let peak = 0;
  for (let i = 1; i < n; i++) if (vals[i] > vals[peak]) peak = i;
  ctx.fillStyle = '#86a194';
  ctx.textBaseline = 'bottom';
  ctx.textAlign = 'left';
  ctx.fillText(`${Math.round(-span * 1e6)} µs`, 0, h);
  ctx.textAlign = 'right';
  ctx.fillText(`+${Math.round(span * 1e6)} µs`, w, h);
  if (typeof chosenS === 'number' && Number.isFinite(chosenS)) {
    const cxm = x(chosenS);
    ctx.strokeStyle = '#ffffff';
    ctx.setLineDash([4, 3]);
    ctx.lineWidth = 1.5;
    ctx.beginPath();
    ctx.moveTo(cxm, top);
    ctx.lineTo(cxm, top + ph);
    ctx.stroke();
    ctx.setLineDash([]);
    ctx.fillStyle = '#ffffff';
    ctx.textAlign = 'center';
    ctx.fillText(`chosen ${chosenS >= 0 ? '+' : ''}${Math.round(chosenS * 1e6)} µs`, w / 2, h);
  }
  return lagOf(peak);
}

/**
 * For arrays that span height: the steered response over azimuth (across) and elevation (up),
 * warm white where the evidence is, the hop's directions as rings. Returns the lit cells.
 */
export function drawElevationMap(ctx, w, h, map, directions, colourOf) {
  const dm = map && map.direction_map;
  if (!dm || !Array.isArray(dm.elevation_deg) || dm.elevation_deg.length < 2) return 0;
  const els = dm.elevation_deg;
  const rows = dm.values;
  const n = rows[0].length;
  const L = 34;
  const B = 16;
  const pw = w - L;
  const ph = h - B;
  const elStep = els.length > 1 ? els[1] - els[0] : 20;
  const elLo = els[0] - elStep / 2;
  const elHi = els[els.length - 1] + elStep / 2;
  const x = (az) => L + ((az + 180) / 360) * pw;
  const y = (el) => ph * (1 - (el - elLo) / (elHi - elLo));
  const [er, eg, eb] = EVIDENCE;
  ctx.fillStyle = '#0e1915';
  ctx.fillRect(L, 0, pw, ph);
  let lit = 0;
  rows.forEach((row, r) => {
    for (let i = 0; i < n; i++) {
      const v = row[i];
      if (v <= 0.02) continue;
      lit++;
      const az0 = dm.azimuth_first_deg + (i - 0.5) * dm.azimuth_step_deg;
      ctx.fillStyle = `rgba(${er},${eg},${eb},${(0.95 * v * v * v).toFixed(3)})`;
      ctx.fillRect(x(az0), y(els[r] + elStep / 2), (dm.azimuth_step_deg / 360) * pw + 0.5, y(els[r] - elStep / 2) - y(els[r] + elStep / 2) + 0.5);
    }
  });
  for (const d of directions) {
    if (typeof d.el !== 'number') continue;
    ctx.strokeStyle = colourOf(d.track);
    ctx.lineWidth = 2;
    ctx.beginPath();
    ctx.arc(x(d.az), y(d.el), 6, 0, Math.PI * 2);
    ctx.stroke();
  }
  ctx.fillStyle = '#86a194';
  ctx.font = '11px system-ui, sans-serif';
  ctx.textAlign = 'right';
  ctx.textBaseline = 'middle';
  for (const el of [elLo + elStep / 2, 0, els[els.length - 1]]) ctx.fillText(`${Math.round(el)}°`, L - 4, y(el));
  ctx.textAlign = 'center';
  ctx.textBaseline = 'bottom';
  for (const az of [-180, -90, 0, 90, 180]) ctx.fillText(az === 0 ? 'front' : String(az), Math.min(w - 12, Math.max(L + 10, x(az))), h);
  return lit;
}

// The history strip: direction against time for the last few minutes, one dot per event in its
// track's colour, the live hop's directions on the right edge; and the track legend beside it.
// Compass bearings (0-360, north at the bottom and top) when the array has a heading, else
// azimuths (front in the middle, back at the edges).

import { trackColour } from './palette.js';

export const HISTORY_KEEP_S = 600; // the longest span the strip can show
const HISTORY_MAX = 4000; // dots kept at most

/** Keep an event (or a catch-up event) for the strip; drop what is older than HISTORY_KEEP_S. */
export function addHistory(history, e) {
  history.push({ t: Number(e.start_s), az: Number(e.azimuth_deg), bearing: typeof e.bearing_deg === 'number' ? e.bearing_deg : null, track: e.track });
  const newest = history[history.length - 1].t;
  let cut = 0;
  while (cut < history.length && (newest - history[cut].t > HISTORY_KEEP_S || history.length - cut > HISTORY_MAX)) cut++;
  if (cut > 0) history.splice(0, cut);
}

function axisOf(heading) {
  return heading === null
    ? { lo: -180, hi: 180, grid: [[-180, 'back'], [-90, 'left'], [0, 'front'], [90, 'right'], [180, 'back']], value: (az) => (((az + 180) % 360) + 360) % 360 - 180 }
    : { lo: 0, hi: 360, grid: [[0, 'N'], [90, 'E'], [180, 'S'], [270, 'W'], [360, 'N']], value: (az) => (((az + heading) % 360) + 360) % 360 };
}

/**
 * Draw the strip. `nowS` is the stream time at the right edge, `spanS` the seconds shown,
 * `live` the current hop's directions [{az, track, score}].
 */
export function drawHistory(ctx, w, h, { history, nowS, spanS, heading, live }) {
  const axis = axisOf(heading);
  const L = 44;
  const R = 14;
  const T = 6;
  const B = 18;
  const pw = w - L - R;
  const ph = h - T - B;
  const x = (t) => L + pw * (1 - (nowS - t) / spanS);
  const y = (v) => T + ph * (1 - (v - axis.lo) / (axis.hi - axis.lo));
  ctx.fillStyle = '#0e1915';
  ctx.fillRect(L, T, pw, ph);
  ctx.font = '12px system-ui, sans-serif';
  ctx.textBaseline = 'middle';
  ctx.textAlign = 'right';
  for (const [v, label] of axis.grid) {
    ctx.strokeStyle = '#284036';
    ctx.lineWidth = 1;
    ctx.beginPath();
    ctx.moveTo(L, y(v));
    ctx.lineTo(L + pw, y(v));
    ctx.stroke();
    ctx.fillStyle = '#86a194';
    ctx.fillText(label, L - 6, Math.min(h - B - 4, Math.max(T + 5, y(v))));
  }
  ctx.textBaseline = 'bottom';
  ctx.textAlign = 'center';
  const step = spanS <= 60 ? 15 : spanS <= 180 ? 30 : spanS <= 300 ? 60 : 120;
  for (let ago = 0; ago <= spanS + 1e-6; ago += step) {
    const tx = x(nowS - ago);
    ctx.strokeStyle = '#1f332b';
    ctx.beginPath();
    ctx.moveTo(tx, T);
    ctx.lineTo(tx, T + ph);
    ctx.stroke();
    ctx.fillStyle = '#86a194';
    ctx.textAlign = ago === 0 ? 'right' : 'center';
    ctx.fillText(ago === 0 ? 'now' : ago % 60 === 0 ? `−${ago / 60} min` : `−${ago} s`, ago === 0 ? L + pw : tx, h);
  }
  let drawn = 0;
  for (const p of history) {
    if (nowS - p.t > spanS || p.t > nowS + 1) continue;
    const v = heading !== null && p.bearing !== null ? p.bearing : axis.value(p.az);
    ctx.fillStyle = trackColour(p.track);
    ctx.beginPath();
    ctx.arc(x(p.t), y(v), 3.2, 0, Math.PI * 2);
    ctx.fill();
    drawn++;
  }
  for (const d of live) {
    ctx.strokeStyle = trackColour(d.track);
    ctx.lineWidth = 2;
    ctx.globalAlpha = 0.4 + 0.6 * d.score;
    ctx.beginPath();
    ctx.arc(L + pw - 5, y(axis.value(d.az)), 5, 0, Math.PI * 2);
    ctx.stroke();
  }
  ctx.globalAlpha = 1;
  return drawn;
}

/** The track legend: one row per track heard in the window, most recent first. */
export function renderLegend(table, tracks, { heading, elevation, nowS }) {
  const rows = [...tracks.values()].filter((t) => nowS - t.lastS <= HISTORY_KEEP_S).sort((a, b) => b.lastS - a.lastS).slice(0, 8);
  const head = document.createElement('tr');
  const names = ['track', heading !== null ? 'bearing' : 'azimuth', ...(elevation ? ['elev.'] : []), 'calls', 'heard'];
  for (const n of names) {
    const th = document.createElement('th');
    th.textContent = n;
    head.append(th);
  }
  const body = rows.map((t) => {
    const tr = document.createElement('tr');
    tr.dataset.track = String(t.track);
    const cells = [];
    const id = document.createElement('td');
    const sw = document.createElement('span');
    sw.className = 'swatch';
    sw.style.background = trackColour(t.track);
    id.append(sw, document.createTextNode(`#${t.track}`));
    cells.push(id);
    const dir = heading !== null ? (((t.az + heading) % 360) + 360) % 360 : t.az;
    cells.push(cell(`${dir.toFixed(1)}°`));
    if (elevation) cells.push(cell(typeof t.el === 'number' ? `${t.el.toFixed(1)}°` : '—'));
    cells.push(cell(String(t.calls)));
    const ago = nowS - t.lastS;
    cells.push(cell(ago < 2 ? 'now' : ago < 90 ? `${ago.toFixed(0)} s ago` : `${(ago / 60).toFixed(0)} min ago`));
    tr.append(...cells);
    return tr;
  });
  if (body.length === 0) {
    const tr = document.createElement('tr');
    const td = cell('no track heard yet');
    td.colSpan = names.length;
    td.className = 'muted';
    tr.append(td);
    body.push(tr);
  }
  table.replaceChildren(head, ...body);
}

function cell(text) {
  const td = document.createElement('td');
  td.textContent = text;
  return td;
}

// bearline live view. Messages (protocol 1) update `state`; a requestAnimationFrame loop
// draws from it, so the drawing rate does not follow the message rate. No framework, no build.
// Angles follow the project's convention: azimuth 0 = front (+y, drawn up), +90 = right (+x).
// The dial's rings are time: a track's dots sink from "now" to "3 s ago"; calls flash on the
// rim; the delay map's evidence glows in the band just inside it (evidence.js). Below the dial
// the history strip and the track legend (history-strip.js). Colours: palette.js.

import { trackColour, TRACK_COLOURS, VOTE_AGREES, VOTE_COLOURS, VOTE_NONE, VOTE_OTHER } from './palette.js';
import { addHistory, drawHistory, renderLegend } from './history-strip.js';
import { drawElevationMap, drawEvidenceRing, drawLagPlot, ringValues } from './evidence.js';

const TRAIL_S = 3; // seconds of history drawn per track on the dial
const STALE_S = 1.5; // a direction older than this is drawn dimmed
const EVENT_FLASH_S = 2.5;
const EVENTS_SHOWN = 8;
const LEVEL_FLOOR_DB = -80;
const RETRY_FIRST_MS = 500;
const RETRY_MAX_MS = 8000;
const LEGEND_EVERY_MS = 500;
/** Radii of the dial's time rings (fractions of the dial), as the trails use them. */
const RING_NOW = 0.86;
const RING_SINK = 0.32;

const $ = (id) => document.getElementById(id);
const el = {
  dial: $('dial'), levels: $('levels'), bands: $('bands'),
  azimuth: $('azimuth-readout'), bearing: $('bearing-readout'), hop: $('hop-readout'),
  elevation: $('elevation-readout'), elevationCell: $('elevation-cell'), readout: document.querySelector('.readout'),
  link: $('link-state'), arrayName: $('array-name'), events: $('event-list'), drops: $('drop-note'),
  history: $('history'), historySpan: $('history-span'), legend: $('track-legend'),
  lagPlot: $('lag-plot'), lagPair: $('lag-pair'), elevWrap: $('elev-wrap'), elevMap: $('elev-map'),
};

const state = {
  geometry: null,
  settings: {},
  frame: null, // latest frame message
  frameAt: 0, // performance.now() when it came
  trails: new Map(), // track id -> [{az, at}]
  events: [], // newest first: event and gap messages with `at`
  peaks: [], // per-channel peak hold, dBFS
  dropped: 0,
  history: [], // events of the last minutes for the strip: {t, az, bearing, track}
  tracks: new Map(), // track id -> {track, az, el, calls, lastS}
  nowS: null, // stream time of the newest record
  nowAt: 0, // performance.now() when it came
  threeD: false, // the array spans height: elevation is shown
  maps: null, // latest 'maps' message (delay map, direction map)
  mapTdoa: null, // tdoa_s of the map's own hop
  mapsAt: 0,
  legendAt: 0,
};

// Counters and drawn figures for tests and the bench (read through window.bearlineViewer).
const counts = { messages: 0, frames: 0, events: 0, connects: 0, draws: 0, catchUps: 0, maps: 0, historyDots: 0, elevationCells: 0 };
const colours = { tracks: TRACK_COLOURS, votes: VOTE_COLOURS };
window.bearlineViewer = { counts, colours, lagPeakS: null, mapTimeS: null };

export { trackColour };

export function formatDeg(deg) {
  return typeof deg === 'number' && Number.isFinite(deg) ? `${deg.toFixed(1)}°` : '—';
}

/** Screen offset of an azimuth on a circle of radius r: front up, right to the right. */
function polar(azDeg, r) {
  const a = (azDeg * Math.PI) / 180;
  return [Math.sin(a) * r, -Math.cos(a) * r];
}

// ---- messages ---------------------------------------------------------------------------

function directionsOf(frame) {
  if (Array.isArray(frame.sources) && frame.sources.length > 0) {
    return frame.sources
      .filter((s) => typeof s.azimuth_deg === 'number')
      .map((s) => ({ az: s.azimuth_deg, el: typeof s.elevation_deg === 'number' ? s.elevation_deg : null, score: clamp01(s.score), track: s.track ?? null }));
  }
  if (typeof frame.azimuth_deg !== 'number') return [];
  return [{ az: frame.azimuth_deg, el: typeof frame.elevation_deg === 'number' ? frame.elevation_deg : null, score: clamp01(frame.confidence), track: frame.track ?? null }];
}

function clamp01(x) {
  return typeof x === 'number' && Number.isFinite(x) ? Math.min(1, Math.max(0, x)) : 0;
}

function noteTime(t, now) {
  if (typeof t === 'number' && Number.isFinite(t) && (state.nowS === null || t >= state.nowS)) {
    state.nowS = t;
    state.nowAt = now;
  }
}

function trackEntry(id) {
  let t = state.tracks.get(id);
  if (!t) state.tracks.set(id, (t = { track: id, az: 0, el: null, calls: 0, lastS: -Infinity }));
  return t;
}

function onFrame(msg, now) {
  counts.frames++;
  state.frame = msg;
  state.frameAt = now;
  noteTime(msg.time_s, now);
  for (const d of directionsOf(msg)) {
    const key = d.track ?? 'untracked';
    let trail = state.trails.get(key);
    if (!trail) state.trails.set(key, (trail = []));
    trail.push({ az: d.az, at: now, score: d.score });
    if (d.track !== null) {
      const t = trackEntry(d.track);
      t.az = d.az;
      t.el = d.el;
      t.lastS = msg.time_s;
    }
  }
  if (state.threeD) {
    const hasEl = typeof msg.elevation_deg === 'number';
    el.elevation.textContent = hasEl ? formatDeg(msg.elevation_deg) : '—';
    el.elevation.dataset.value = hasEl ? String(msg.elevation_deg) : '';
  }
  el.azimuth.textContent = formatDeg(msg.azimuth_deg);
  el.azimuth.dataset.value = typeof msg.azimuth_deg === 'number' ? String(msg.azimuth_deg) : '';
  const hasBearing = typeof msg.bearing_deg === 'number';
  el.bearing.textContent = hasBearing ? formatDeg(msg.bearing_deg) : '—';
  el.bearing.dataset.value = hasBearing ? String(msg.bearing_deg) : '';
  const bits = [`t ${Number(msg.time_s).toFixed(2)} s`, `confidence ${clamp01(msg.confidence).toFixed(2)}`];
  if (typeof msg.level_dbfs === 'number') bits.push(`${msg.level_dbfs.toFixed(0)} dBFS`);
  if (mirrorAxis(msg) !== null) bits.push(`${msg.mirror.replace('-', '/')} ambiguous`);
  el.hop.textContent = bits.join(' · ');
}

/** Axis of a record's azimuth mirror (a reads as 2 axis - a), or null; older records: a 'front-back' pair along x. */
function mirrorAxis(rec) {
  if (typeof rec.mirror_axis_deg === 'number') return rec.mirror_axis_deg;
  return rec.mirror === 'front-back' ? 90 : null;
}

function onEventLike(msg, now, replay = false) {
  if (msg.type === 'event') {
    counts.events++;
    addHistory(state.history, msg);
    const t = trackEntry(msg.track);
    t.calls++;
    if (Number(msg.end_s) >= t.lastS) {
      t.az = msg.azimuth_deg;
      t.el = typeof msg.elevation_deg === 'number' ? msg.elevation_deg : t.el;
      t.lastS = Number(msg.end_s);
    }
  }
  noteTime(Number(msg.end_s), now);
  // A replayed event (catch-up) does not flash on the dial: it is not news.
  state.events.unshift({ ...msg, at: replay ? -Infinity : now });
  state.events.length = Math.min(state.events.length, 40);
  if (!replay) renderEventList();
}

/** A late viewer's catch-up: the recent events and gaps in order, then the tracks as the server knows them. */
function onCatchUp(msg, now) {
  counts.catchUps++;
  const items = [...(msg.events ?? []).map((e) => ({ ...e, type: 'event' })), ...(msg.gaps ?? []).map((g) => ({ ...g, type: 'gap' }))];
  items.sort((a, b) => Number(a.start_s) - Number(b.start_s));
  for (const item of items) onEventLike(item, now, true);
  for (const t of msg.tracks ?? []) {
    const entry = trackEntry(t.track);
    entry.az = t.azimuth_deg;
    entry.el = t.elevation_deg;
    entry.calls = t.calls;
    entry.lastS = t.last_s;
  }
  noteTime(msg.now_s, now);
  renderEventList();
  state.legendAt = 0;
}

function onMaps(msg, now) {
  counts.maps++;
  state.maps = msg;
  state.mapsAt = now;
  // The feed sends a hop's frame just before its map: keep that frame's delays beside the map.
  const f = state.frame;
  state.mapTdoa = f && Math.abs(Number(f.time_s) - Number(msg.time_s)) < 1e-6 && Array.isArray(f.tdoa_s) ? f.tdoa_s : null;
}

function renderEventList() {
  if (state.events.length === 0) {
    const li = document.createElement('li');
    li.className = 'muted';
    li.textContent = 'none yet';
    el.events.replaceChildren(li);
    return;
  }
  const items = state.events.slice(0, EVENTS_SHOWN).map((e) => {
    const li = document.createElement('li');
    if (e.type === 'gap') {
      li.className = 'gap';
      const lost = Number(e.end_s) - Number(e.start_s);
      li.textContent = `gap at ${Number(e.start_s).toFixed(1)} s: ${lost.toFixed(2)} s lost${e.gap ? ` (${e.gap})` : ''}`;
      return li;
    }
    const sw = document.createElement('span');
    sw.className = 'swatch';
    sw.style.background = trackColour(e.track);
    const az = document.createElement('span');
    az.className = 'az';
    az.textContent = formatDeg(e.azimuth_deg);
    const spread = document.createElement('span');
    spread.className = 'muted';
    spread.textContent = typeof e.spread_deg === 'number' ? `±${e.spread_deg.toFixed(1)}` : '';
    const when = document.createElement('span');
    when.className = 'when muted';
    when.textContent = `${Number(e.start_s).toFixed(1)} s · #${e.track}`;
    li.append(sw, az, spread, when);
    return li;
  });
  el.events.replaceChildren(...items);
}

function onHello(msg) {
  state.geometry = msg.geometry ?? null;
  state.settings = msg.settings ?? {};
  state.trails.clear();
  state.peaks = [];
  state.history.length = 0;
  state.tracks.clear();
  state.events.length = 0;
  state.nowS = null;
  state.maps = null;
  renderEventList();
  const g = state.geometry;
  // A 3-D array (mics at different heights) resolves elevation: show it.
  const zs = g && Array.isArray(g.mics) ? g.mics.map((m) => m.position_m[2]) : [];
  state.threeD = zs.length > 0 && Math.max(...zs) - Math.min(...zs) > 0.005;
  el.elevationCell.hidden = !state.threeD;
  el.readout.dataset.threeD = String(state.threeD);
  const pairs = [];
  const n = g && Array.isArray(g.mics) ? g.mics.length : 0;
  for (let a = 0; a < n; a++) for (let b = a + 1; b < n; b++) pairs.push(`${g.mics[a].channel}–${g.mics[b].channel}`);
  el.lagPair.replaceChildren(...pairs.map((label, i) => Object.assign(document.createElement('option'), { value: String(i), textContent: label })));
  const bits = [];
  if (g) bits.push(`${g.name} · ${g.mics.length} mics`);
  if (typeof state.settings.station === 'string') bits.unshift(state.settings.station);
  if (typeof state.settings.sample_rate_hz === 'number') bits.push(`${state.settings.sample_rate_hz} Hz`);
  if (typeof state.settings.hop_s === 'number') bits.push(`hop ${(state.settings.hop_s * 1000).toFixed(0)} ms`);
  if (g && typeof g.heading_deg !== 'number') bits.push('no heading');
  el.arrayName.textContent = bits.join(' · ');
}

function onMessage(text) {
  let msg;
  try {
    msg = JSON.parse(text);
  } catch {
    return;
  }
  counts.messages++;
  const now = performance.now();
  switch (msg.type) {
    case 'hello': return onHello(msg);
    case 'catch_up': return onCatchUp(msg, now);
    case 'maps': return onMaps(msg, now);
    case 'frame': return onFrame(msg, now);
    case 'event':
    case 'gap': return onEventLike(msg, now);
    case 'status':
      state.dropped = msg.dropped_frames;
      el.drops.textContent = `This view skipped ${msg.dropped_frames} frames to keep up (slow link or busy device).`;
      return;
    default: return;
  }
}

// ---- connection -------------------------------------------------------------------------

let retryMs = RETRY_FIRST_MS;

function setLink(stateName, text) {
  el.link.dataset.state = stateName;
  el.link.textContent = text;
}

function connect() {
  const token = new URLSearchParams(location.search).get('token');
  const scheme = location.protocol === 'https:' ? 'wss:' : 'ws:';
  const url = `${scheme}//${location.host}/feed${token ? `?token=${encodeURIComponent(token)}` : ''}`;
  setLink('connecting', 'connecting…');
  let ws;
  try {
    ws = new WebSocket(url);
  } catch {
    return retryLater();
  }
  ws.onopen = () => {
    counts.connects++;
    retryMs = RETRY_FIRST_MS;
    setLink('live', 'live');
    // Ask for the delay map too: the feed sends it only to viewers that ask.
    ws.send(JSON.stringify({ type: 'subscribe', frames: true, maps: true }));
  };
  ws.onmessage = (ev) => onMessage(ev.data);
  ws.onclose = (ev) => {
    const why = ev.reason ? ` (${ev.reason})` : '';
    retryLater(why);
  };
}

function retryLater(why = '') {
  const wait = retryMs;
  retryMs = Math.min(RETRY_MAX_MS, retryMs * 2);
  setLink('lost', `lost${why} · retry in ${(wait / 1000).toFixed(1)} s`);
  setTimeout(connect, wait);
}

// ---- drawing ----------------------------------------------------------------------------

/** Size the canvas backing store to its CSS box; returns [ctx, width, height] in CSS pixels. */
function fit(canvas) {
  const dpr = window.devicePixelRatio || 1;
  const w = canvas.clientWidth;
  const h = canvas.clientHeight;
  if (canvas.width !== Math.round(w * dpr) || canvas.height !== Math.round(h * dpr)) {
    canvas.width = Math.round(w * dpr);
    canvas.height = Math.round(h * dpr);
  }
  const ctx = canvas.getContext('2d');
  ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
  ctx.clearRect(0, 0, w, h);
  return [ctx, w, h];
}

function drawDial(now) {
  const [ctx, w, h] = fit(el.dial);
  const cx = w / 2;
  const cy = h / 2;
  const labelSize = Math.max(13, Math.round(Math.min(w, h) * 0.031));
  const R = Math.min(w, h) / 2 - labelSize * 2.6;
  if (R <= 20) return;
  const css = getComputedStyle(document.documentElement);
  const line = css.getPropertyValue('--line').trim() || '#284036';
  const muted = css.getPropertyValue('--muted').trim() || '#86a194';

  // Face: a soft disc, range rings, and ticks every 10 degrees.
  const face = ctx.createRadialGradient(cx, cy, R * 0.1, cx, cy, R);
  face.addColorStop(0, '#15261f');
  face.addColorStop(1, '#0e1915');
  ctx.fillStyle = face;
  ctx.beginPath();
  ctx.arc(cx, cy, R, 0, Math.PI * 2);
  ctx.fill();
  ctx.strokeStyle = line;
  ctx.lineWidth = 1;
  for (const f of [RING_NOW - RING_SINK, RING_NOW - RING_SINK / 2, RING_NOW, 1]) {
    ctx.beginPath();
    ctx.arc(cx, cy, R * f, 0, Math.PI * 2);
    ctx.stroke();
  }
  // The delay map's evidence, in the band inside the rim (fades when no map has come lately).
  const mapAge = (now - state.mapsAt) / 1000;
  if (state.maps && mapAge < 2) drawEvidenceRing(ctx, cx, cy, R * 0.895, R * 0.975, ringValues(state.maps), mapAge < 0.5 ? 1 : 0.4);
  for (let a = -170; a <= 180; a += 10) {
    const major = a % 30 === 0;
    const [x0, y0] = polar(a, R);
    const [x1, y1] = polar(a, R * (major ? 0.93 : 0.965));
    ctx.strokeStyle = major ? muted : line;
    ctx.lineWidth = major ? 1.5 : 1;
    ctx.beginPath();
    ctx.moveTo(cx + x0, cy + y0);
    ctx.lineTo(cx + x1, cy + y1);
    ctx.stroke();
  }
  ctx.font = `600 ${labelSize}px system-ui, sans-serif`;
  ctx.textAlign = 'center';
  ctx.textBaseline = 'middle';
  ctx.fillStyle = muted;
  for (let a = -150; a <= 180; a += 30) {
    const [x, y] = polar(a, R + labelSize * 1.1);
    ctx.fillText(a === 0 ? 'front' : a === 180 ? 'back' : `${a > 0 ? '+' : ''}${a}`, cx + x, cy + y);
  }
  const heading = state.geometry && typeof state.geometry.heading_deg === 'number' ? state.geometry.heading_deg : null;
  if (heading !== null) {
    // North sits at azimuth -heading: a small badge on the rim.
    const [x, y] = polar(-heading, R);
    const r = labelSize * 0.75;
    ctx.fillStyle = '#0b1411';
    ctx.strokeStyle = '#bcd3c7';
    ctx.lineWidth = 1.5;
    ctx.beginPath();
    ctx.arc(cx + x, cy + y, r, 0, Math.PI * 2);
    ctx.fill();
    ctx.stroke();
    ctx.fillStyle = '#bcd3c7';
    ctx.font = `700 ${Math.round(labelSize * 0.85)}px system-ui, sans-serif`;
    ctx.fillText('N', cx + x, cy + y + 0.5);
  }

  drawArray(ctx, cx, cy, R * 0.26, labelSize);
  drawRingLabels(ctx, cx, cy, R, labelSize, muted);

  // Event flashes: an arc over the event's spread on the rim, fading out.
  for (const e of state.events) {
    if (e.type !== 'event') continue;
    const age = (now - e.at) / 1000;
    if (age > EVENT_FLASH_S) break;
    const spread = Math.max(3, Number(e.spread_deg) || 0);
    const a0 = ((e.azimuth_deg - spread - 90) * Math.PI) / 180;
    const a1 = ((e.azimuth_deg + spread - 90) * Math.PI) / 180;
    ctx.globalAlpha = 1 - age / EVENT_FLASH_S;
    ctx.strokeStyle = trackColour(e.track);
    ctx.lineWidth = Math.max(5, R * 0.035);
    ctx.beginPath();
    ctx.arc(cx, cy, R * 1.0, a0, a1);
    ctx.stroke();
  }
  ctx.globalAlpha = 1;

  // Trails: older points sink toward the centre and fade.
  for (const [key, trail] of state.trails) {
    while (trail.length > 0 && now - trail[0].at > TRAIL_S * 1000) trail.shift();
    if (trail.length === 0) {
      state.trails.delete(key);
      continue;
    }
    const colour = trackColour(key === 'untracked' ? null : key);
    ctx.fillStyle = colour;
    for (const p of trail) {
      const age = (now - p.at) / (TRAIL_S * 1000);
      const [x, y] = polar(p.az, R * (RING_NOW - RING_SINK * age));
      ctx.globalAlpha = (1 - age) * 0.45;
      ctx.beginPath();
      ctx.arc(cx + x, cy + y, 2 + 3 * p.score * (1 - age), 0, Math.PI * 2);
      ctx.fill();
    }
  }
  ctx.globalAlpha = 1;

  // The current hop: a ray and a bead per direction; size and opacity follow confidence.
  const f = state.frame;
  if (!f) return;
  const fresh = (now - state.frameAt) / 1000 < STALE_S;
  for (const d of directionsOf(f)) {
    const colour = trackColour(d.track);
    const alpha = (0.35 + 0.65 * d.score) * (fresh ? 1 : 0.3);
    const [xi, yi] = polar(d.az, R * 0.3);
    const [xo, yo] = polar(d.az, R * RING_NOW);
    ctx.globalAlpha = alpha * 0.7;
    ctx.strokeStyle = colour;
    ctx.lineWidth = 2 + 3 * d.score;
    ctx.beginPath();
    ctx.moveTo(cx + xi, cy + yi);
    ctx.lineTo(cx + xo, cy + yo);
    ctx.stroke();
    ctx.globalAlpha = alpha;
    ctx.fillStyle = colour;
    ctx.beginPath();
    ctx.arc(cx + xo, cy + yo, R * (0.025 + 0.045 * d.score), 0, Math.PI * 2);
    ctx.fill();
    const axis = mirrorAxis(f);
    if (axis !== null) {
      // The mirror image a pair or line cannot tell apart (across its axis): a hollow bead.
      const [xm, ym] = polar(2 * axis - d.az, R * RING_NOW);
      ctx.globalAlpha = alpha * 0.6;
      ctx.lineWidth = 2;
      ctx.setLineDash([4, 4]);
      ctx.beginPath();
      ctx.arc(cx + xm, cy + ym, R * (0.025 + 0.045 * d.score), 0, Math.PI * 2);
      ctx.stroke();
      ctx.setLineDash([]);
    }
  }
  ctx.globalAlpha = 1;
}

/** What the rings mean, written along the line to the back of the dial (lower right of it). */
function drawRingLabels(ctx, cx, cy, R, labelSize, muted) {
  const size = Math.max(11, Math.round(labelSize * 0.72));
  ctx.font = `${size}px system-ui, sans-serif`;
  ctx.textAlign = 'left';
  ctx.textBaseline = 'middle';
  // Time rings just right of the line to the back; the rim's bands just left of it.
  const labels = [
    [RING_NOW, 'now', 168, 'left'],
    [RING_NOW - RING_SINK / 2, `${TRAIL_S / 2} s ago`, 168, 'left'],
    [RING_NOW - RING_SINK, `${TRAIL_S} s ago`, 168, 'left'],
    [1, 'calls', -172, 'right'],
    [0.935, 'evidence', -157, 'right'],
  ];
  for (const [f, text, az, side] of labels) {
    const [x, y] = polar(az, R * f);
    const w = ctx.measureText(text).width;
    const x0 = side === 'left' ? cx + x + 3 : cx + x - w - 7;
    ctx.fillStyle = 'rgba(11,20,17,0.75)';
    ctx.fillRect(x0, cy + y - size * 0.6, w + 4, size * 1.2);
    ctx.fillStyle = muted;
    ctx.textAlign = 'left';
    ctx.fillText(text, x0 + 2, cy + y);
  }
}

/** The mics seen from above (x right, y front = up), scaled into a circle of radius r. */
function drawArray(ctx, cx, cy, r, labelSize) {
  const g = state.geometry;
  ctx.strokeStyle = '#36574a';
  ctx.lineWidth = 1;
  ctx.setLineDash([3, 5]);
  ctx.beginPath();
  ctx.arc(cx, cy, r, 0, Math.PI * 2);
  ctx.stroke();
  ctx.setLineDash([]);
  if (!g || !Array.isArray(g.mics) || g.mics.length === 0) return;
  let reach = 0;
  for (const m of g.mics) reach = Math.max(reach, Math.hypot(m.position_m[0], m.position_m[1]));
  const scale = reach > 0 ? (r * 0.78) / reach : 0;
  // A small front arrow so the array's own front is plain even without the labels.
  ctx.fillStyle = '#36574a';
  ctx.beginPath();
  ctx.moveTo(cx, cy - r - 2);
  ctx.lineTo(cx - 6, cy - r + 9);
  ctx.lineTo(cx + 6, cy - r + 9);
  ctx.closePath();
  ctx.fill();
  const dotR = Math.max(8, labelSize * 0.62);
  ctx.font = `700 ${Math.round(dotR * 1.25)}px system-ui, sans-serif`;
  ctx.textAlign = 'center';
  ctx.textBaseline = 'middle';
  for (const m of g.mics) {
    const x = cx + m.position_m[0] * scale;
    const y = cy - m.position_m[1] * scale;
    ctx.fillStyle = '#d7e4dc';
    ctx.beginPath();
    ctx.arc(x, y, dotR, 0, Math.PI * 2);
    ctx.fill();
    ctx.fillStyle = '#0b1411';
    ctx.fillText(String(m.channel), x, y + 0.5);
  }
}

function drawLevels() {
  const [ctx, w, h] = fit(el.levels);
  const levels = state.frame && Array.isArray(state.frame.levels_dbfs) ? state.frame.levels_dbfs : [];
  const n = levels.length || (state.geometry ? state.geometry.mics.length : 0);
  if (n === 0) return;
  const rowH = h / n;
  const labelW = 34;
  const valueW = 44;
  const barW = w - labelW - valueW;
  ctx.font = `600 ${Math.min(15, Math.max(11, rowH * 0.55))}px system-ui, sans-serif`;
  ctx.textBaseline = 'middle';
  for (let i = 0; i < n; i++) {
    const db = typeof levels[i] === 'number' && Number.isFinite(levels[i]) ? levels[i] : LEVEL_FLOOR_DB;
    const frac = Math.min(1, Math.max(0, (db - LEVEL_FLOOR_DB) / -LEVEL_FLOOR_DB));
    state.peaks[i] = Math.max(db, (state.peaks[i] ?? LEVEL_FLOOR_DB) - 0.4);
    const peakFrac = Math.min(1, Math.max(0, (state.peaks[i] - LEVEL_FLOOR_DB) / -LEVEL_FLOOR_DB));
    const y = i * rowH + rowH * 0.2;
    const bh = rowH * 0.6;
    ctx.fillStyle = '#1b2e27';
    ctx.fillRect(labelW, y, barW, bh);
    ctx.fillStyle = db > -3 ? '#ef6f6c' : db > -12 ? '#f2b134' : '#7fd28a';
    ctx.fillRect(labelW, y, barW * frac, bh);
    ctx.fillStyle = '#e2ece6';
    ctx.fillRect(labelW + barW * peakFrac - 1, y, 2, bh);
    ctx.textAlign = 'left';
    ctx.fillStyle = '#86a194';
    ctx.fillText(`ch${i}`, 0, y + bh / 2);
    ctx.textAlign = 'right';
    ctx.fillStyle = '#e2ece6';
    ctx.fillText(levels.length ? db.toFixed(0) : '—', w, y + bh / 2);
  }
}

function drawBands() {
  const [ctx, w, h] = fit(el.bands);
  const votes = state.frame && Array.isArray(state.frame.band_votes) ? state.frame.band_votes : [];
  ctx.fillStyle = '#86a194';
  ctx.font = '12px system-ui, sans-serif';
  if (votes.length === 0) {
    ctx.textAlign = 'left';
    ctx.textBaseline = 'middle';
    ctx.fillText('no band votes in this feed', 0, h / 2);
    return;
  }
  const axisH = 16;
  const top = 4;
  const plotH = h - axisH - top;
  let maxW = 0;
  for (const v of votes) maxW = Math.max(maxW, Number(v.weight) || 0);
  const consensus = state.frame && Array.isArray(state.frame.tdoa_s) ? state.frame.tdoa_s[0] : null;
  const gap = 2;
  const bw = Math.max(2, (w - gap * (votes.length - 1)) / votes.length);
  votes.forEach((v, i) => {
    const frac = maxW > 0 ? (Number(v.weight) || 0) / maxW : 0;
    const agrees = typeof consensus === 'number' && typeof v.tdoa_s === 'number' && Math.abs(v.tdoa_s - consensus) <= 25e-6;
    ctx.fillStyle = v.tdoa_s === null ? VOTE_NONE : agrees ? VOTE_AGREES : VOTE_OTHER;
    const bh = Math.max(1, plotH * frac);
    ctx.fillRect(i * (bw + gap), top + plotH - bh, bw, bh);
  });
  const kHz = (hz) => (hz >= 1000 ? `${(hz / 1000).toFixed(hz >= 10000 ? 0 : 1)} kHz` : `${Math.round(hz)} Hz`);
  ctx.fillStyle = '#86a194';
  ctx.textBaseline = 'bottom';
  ctx.textAlign = 'left';
  ctx.fillText(kHz(votes[0].lo_hz), 0, h);
  ctx.textAlign = 'right';
  ctx.fillText(kHz(votes[votes.length - 1].hi_hz), w, h);
  ctx.textAlign = 'center';
  ctx.fillText('amber: agrees · grey: other delay', w / 2, h);
}

/** Stream time now: the newest record's, run on by the wall clock while frames flow. */
function streamNow(now) {
  if (state.nowS === null) return null;
  const fresh = state.frame && (now - state.frameAt) / 1000 < STALE_S;
  return state.nowS + (fresh ? Math.min(STALE_S, (now - state.nowAt) / 1000) : 0);
}

function drawStrip(now) {
  const [ctx, w, h] = fit(el.history);
  const nowS = streamNow(now);
  const heading = state.geometry && typeof state.geometry.heading_deg === 'number' ? state.geometry.heading_deg : null;
  const fresh = state.frame && (now - state.frameAt) / 1000 < STALE_S;
  counts.historyDots = drawHistory(ctx, w, h, {
    history: state.history,
    nowS: nowS ?? 0,
    spanS: Number(el.historySpan.value) || 120,
    heading,
    live: fresh ? directionsOf(state.frame) : [],
  });
  if (nowS !== null && now - state.legendAt > LEGEND_EVERY_MS) {
    state.legendAt = now;
    renderLegend(el.legend, state.tracks, { heading, elevation: state.threeD, nowS });
  }
}

function drawLag() {
  const [ctx, w, h] = fit(el.lagPlot);
  const p = Number(el.lagPair.value) || 0;
  const pairMap = state.maps && Array.isArray(state.maps.delay_map) ? state.maps.delay_map[p] : null;
  // The chosen delay of the same hop as the map (the frame with the map's time), else none.
  const chosen = state.mapTdoa ? state.mapTdoa[p] : null;
  window.bearlineViewer.lagPeakS = drawLagPlot(ctx, w, h, pairMap, chosen);
  window.bearlineViewer.mapTimeS = state.maps ? state.maps.time_s : null;
  // Arrays that span height: the evidence over azimuth and elevation too.
  const rows = state.maps && state.maps.direction_map ? state.maps.direction_map.elevation_deg.length : 0;
  el.elevWrap.hidden = !(state.threeD && rows > 1);
  if (!el.elevWrap.hidden) {
    const [ectx, ew, eh] = fit(el.elevMap);
    const fresh = state.frame && (performance.now() - state.frameAt) / 1000 < STALE_S;
    counts.elevationCells = drawElevationMap(ectx, ew, eh, state.maps, fresh ? directionsOf(state.frame) : [], trackColour);
  }
}

function draw(now) {
  counts.draws++;
  // Dim the readouts and meters when no fresh frame has come (lost link, silent source).
  const stale = !state.frame || (now - state.frameAt) / 1000 >= STALE_S;
  if (document.body.dataset.stale !== String(stale)) document.body.dataset.stale = String(stale);
  drawDial(now);
  drawStrip(now);
  drawLag();
  drawLevels();
  drawBands();
  requestAnimationFrame(draw);
}

el.historySpan.addEventListener('change', () => (state.legendAt = 0));

connect();
requestAnimationFrame(draw);

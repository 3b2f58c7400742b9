// bearline live fixes: stations, the latest bearing rays and the fixes with their error
// ellipses, seen from above (north up) in metres around the origin. Messages come from
// `bearline locate --mqtt --serve` at /feed (src/fleet/fix-view-messages.ts). No map tiles,
// no network beyond this page's own server.

const FIX_FADE_S = 120;
const RAY_FADE_S = 10;
const LIST_LENGTH = 12;

const state = { stations: [], online: {}, fixes: new Map(), calls: [], counts: null, origin: null };
const canvas = document.getElementById('plot');
const ctx = canvas.getContext('2d');
const css = getComputedStyle(document.documentElement);
const colour = (name) => css.getPropertyValue(name).trim();

function nowS() {
  return performance.now() / 1000;
}

function text(el, value) {
  document.getElementById(el).textContent = value;
}

/** The plot's extent in metres: the stations, the recent fixes and a margin, square. */
function extent() {
  const pts = state.stations.map((s) => [s.east_m, s.north_m]);
  for (const f of state.fixes.values()) pts.push([f.east_m, f.north_m]);
  if (pts.length === 0) return { cx: 0, cy: 0, half: 100 };
  const xs = pts.map((p) => p[0]);
  const ys = pts.map((p) => p[1]);
  const cx = (Math.min(...xs) + Math.max(...xs)) / 2;
  const cy = (Math.min(...ys) + Math.max(...ys)) / 2;
  const half = Math.max(20, (Math.max(Math.max(...xs) - Math.min(...xs), Math.max(...ys) - Math.min(...ys)) / 2) * 1.25);
  return { cx, cy, half };
}

function niceStep(span) {
  const raw = span / 5;
  const p = 10 ** Math.floor(Math.log10(raw));
  for (const m of [1, 2, 5, 10]) if (m * p >= raw) return m * p;
  return 10 * p;
}

function draw() {
  const size = Math.round(canvas.clientWidth * devicePixelRatio);
  if (canvas.width !== size) {
    canvas.width = size;
    canvas.height = size;
  }
  const w = canvas.width;
  ctx.clearRect(0, 0, w, w);
  const { cx, cy, half } = extent();
  const k = w / (2 * half);
  const X = (e) => w / 2 + (e - cx) * k;
  const Y = (n) => w / 2 - (n - cy) * k;
  const px = devicePixelRatio;
  // Grid in metres, labelled.
  const step = niceStep(2 * half);
  ctx.strokeStyle = colour('--line');
  ctx.fillStyle = colour('--muted');
  ctx.lineWidth = px;
  ctx.font = `${11 * px}px system-ui, sans-serif`;
  for (let e = Math.ceil((cx - half) / step) * step; e <= cx + half; e += step) {
    ctx.beginPath();
    ctx.moveTo(X(e), 0);
    ctx.lineTo(X(e), w);
    ctx.stroke();
    ctx.fillText(`${Math.round(e)} m`, X(e) + 3 * px, w - 4 * px);
  }
  for (let n = Math.ceil((cy - half) / step) * step; n <= cy + half; n += step) {
    ctx.beginPath();
    ctx.moveTo(0, Y(n));
    ctx.lineTo(w, Y(n));
    ctx.stroke();
    ctx.fillText(`${Math.round(n)} m`, 3 * px, Y(n) - 3 * px);
  }
  ctx.fillText('N ↑', w - 34 * px, 16 * px);
  const t = nowS();
  // Bearing rays of the last calls, fading.
  for (const c of state.calls) {
    const age = t - c.seen;
    if (age > RAY_FADE_S) continue;
    const s = state.stations.find((x) => x.id === c.station);
    if (!s) continue;
    const a = (c.bearing_deg * Math.PI) / 180;
    const len = 4 * half;
    ctx.strokeStyle = colour('--accent');
    ctx.globalAlpha = 0.6 * (1 - age / RAY_FADE_S);
    ctx.beginPath();
    ctx.moveTo(X(s.east_m), Y(s.north_m));
    ctx.lineTo(X(s.east_m + Math.sin(a) * len), Y(s.north_m + Math.cos(a) * len));
    ctx.stroke();
  }
  ctx.globalAlpha = 1;
  // Fixes with their ellipses, fading with age.
  for (const f of state.fixes.values()) {
    const age = t - f.seen;
    if (age > FIX_FADE_S) continue;
    const alpha = Math.max(0.12, 1 - age / FIX_FADE_S);
    ctx.globalAlpha = alpha;
    ctx.strokeStyle = colour('--good');
    ctx.fillStyle = colour('--good');
    ctx.setLineDash(f.backfill ? [5 * px, 4 * px] : []);
    ctx.beginPath();
    // orientation_deg: the major axis, clockwise from north; the canvas turns clockwise from +x.
    ctx.ellipse(X(f.east_m), Y(f.north_m), Math.max(px, f.ellipse.major_m * k), Math.max(px, f.ellipse.minor_m * k), ((f.ellipse.orientation_deg - 90) * Math.PI) / 180, 0, 2 * Math.PI);
    ctx.stroke();
    ctx.setLineDash([]);
    ctx.beginPath();
    ctx.arc(X(f.east_m), Y(f.north_m), 3 * px, 0, 2 * Math.PI);
    ctx.fill();
  }
  ctx.globalAlpha = 1;
  // Stations with their headings.
  for (const s of state.stations) {
    const on = state.online[s.id] !== false;
    ctx.strokeStyle = on ? colour('--ink') : colour('--bad');
    ctx.fillStyle = on ? colour('--ink') : colour('--bad');
    ctx.beginPath();
    ctx.rect(X(s.east_m) - 5 * px, Y(s.north_m) - 5 * px, 10 * px, 10 * px);
    ctx.stroke();
    if (s.heading_deg !== null) {
      const a = (s.heading_deg * Math.PI) / 180;
      ctx.beginPath();
      ctx.moveTo(X(s.east_m), Y(s.north_m));
      ctx.lineTo(X(s.east_m) + Math.sin(a) * 18 * px, Y(s.north_m) - Math.cos(a) * 18 * px);
      ctx.stroke();
    }
    ctx.fillText(s.id, X(s.east_m) + 8 * px, Y(s.north_m) + 14 * px);
  }
}

function renderLists() {
  const ul = document.getElementById('stations');
  ul.replaceChildren(
    ...state.stations.map((s) => {
      const li = document.createElement('li');
      const st = state.online[s.id];
      li.textContent = `${s.id}: ${st === true ? 'online' : st === false ? 'offline' : 'no status yet'}`;
      li.className = st === false ? 'offline' : st === true ? 'online' : '';
      return li;
    }),
  );
  const ol = document.getElementById('fixes');
  const latest = [...state.fixes.values()].sort((a, b) => b.seen - a.seen).slice(0, LIST_LENGTH);
  ol.replaceChildren(
    ...latest.map((f) => {
      const li = document.createElement('li');
      const when = f.utc ? f.utc.slice(11, 19) : '';
      li.textContent = `${when} ${f.east_m.toFixed(1)} E ${f.north_m.toFixed(1)} N ±${f.ellipse.major_m.toFixed(1)} m (${f.stations.join(', ')})${f.revision > 0 ? ` rev ${f.revision}` : ''}${f.backfill ? ' backfill' : ''}`;
      return li;
    }),
  );
  const c = state.counts;
  text('counts', c ? `${c.fixes} fixes, ${c.revised} revised, ${c.backfilled} backfill events, ${c.late} late, ${c.unmatched} heard once, ${c.pending} waiting` : '—');
}

function addFix(f, seen) {
  state.fixes.set(f.id, { ...f, seen });
  if (state.fixes.size > 500) state.fixes.delete(state.fixes.keys().next().value);
}

function onMessage(msg) {
  const t = nowS();
  switch (msg.type) {
    case 'hello':
      state.stations = msg.stations;
      state.origin = msg.origin;
      text('title', `${msg.stations.length} stations` + (msg.origin ? ` around ${msg.origin.lat_deg.toFixed(5)}, ${msg.origin.lon_deg.toFixed(5)}` : ''));
      break;
    case 'snapshot':
      Object.assign(state.online, msg.stations);
      for (const f of msg.fixes) if (!state.fixes.has(f.id)) addFix(f, t);
      if (state.calls.length === 0) state.calls = msg.calls.map((c) => ({ ...c, seen: t - RAY_FADE_S / 2 }));
      state.counts = msg.status;
      break;
    case 'station':
      state.online[msg.id] = msg.online;
      break;
    case 'call':
      state.calls.push({ ...msg, seen: t });
      if (state.calls.length > 200) state.calls.shift();
      break;
    case 'fix':
      addFix(msg, t);
      break;
    case 'status':
      state.counts = msg;
      break;
    default:
      break;
  }
  renderLists();
}

function connect() {
  const token = new URLSearchParams(location.search).get('token');
  const url = `${location.protocol === 'https:' ? 'wss' : 'ws'}://${location.host}/feed${token ? `?token=${encodeURIComponent(token)}` : ''}`;
  const link = document.getElementById('link-state');
  const ws = new WebSocket(url);
  ws.onopen = () => {
    link.dataset.state = 'live';
    link.textContent = 'live';
  };
  ws.onmessage = (ev) => {
    try {
      onMessage(JSON.parse(ev.data));
    } catch {
      // A message this page does not understand is left out.
    }
  };
  ws.onclose = () => {
    link.dataset.state = 'lost';
    link.textContent = 'reconnecting…';
    setTimeout(connect, 2000);
  };
}

function frame() {
  draw();
  requestAnimationFrame(frame);
}

connect();
requestAnimationFrame(frame);

/**
 * WGS 84 geodesy for position fixing: geodetic <-> earth-centred earth-fixed (ECEF) <->
 * local east-north-up (ENU) tangent plane, with the ellipsoid's exact formulas (no
 * flat-earth shortcut), and the haversine great-circle distance on a sphere.
 * Pure functions: numbers in, numbers out.
 */
import type { Vec3 } from '../geometry/vec3.js';

/** WGS 84 defining constants: semi-major axis (m) and flattening. */
export const WGS84_A = 6378137;
export const WGS84_F = 1 / 298.257223563;
/** First eccentricity squared e^2 = f (2 - f). */
export const WGS84_E2 = WGS84_F * (2 - WGS84_F);
/** Semi-minor axis b = a (1 - f). */
export const WGS84_B = WGS84_A * (1 - WGS84_F);
/** Mean earth radius R1 = (2a + b) / 3 (IUGG), for the haversine distance. */
export const MEAN_EARTH_RADIUS_M = (2 * WGS84_A + WGS84_B) / 3;

const DEG = Math.PI / 180;

/** A WGS 84 position: latitude and longitude in degrees, height above the ellipsoid in metres. */
export interface Geodetic {
  lat_deg: number;
  lon_deg: number;
  alt_m: number;
}

/** Geodetic -> ECEF (metres): X = (N + h) cos(phi) cos(lambda), Y = (N + h) cos(phi) sin(lambda), Z = (N (1 - e^2) + h) sin(phi). */
export function geodeticToEcef(g: Geodetic): Vec3 {
  const phi = g.lat_deg * DEG;
  const lam = g.lon_deg * DEG;
  const sinPhi = Math.sin(phi);
  const n = WGS84_A / Math.sqrt(1 - WGS84_E2 * sinPhi * sinPhi);
  const r = (n + g.alt_m) * Math.cos(phi);
  return [r * Math.cos(lam), r * Math.sin(lam), (n * (1 - WGS84_E2) + g.alt_m) * sinPhi];
}

/**
 * ECEF -> geodetic. Latitude by fixed-point iteration of tan(phi) = (Z + e^2 N sin(phi)) / p,
 * started from Bowring's parametric guess; it converges to below 1e-14 rad in a few steps for
 * any point outside the earth's core. Height from the ellipsoid normal.
 */
export function ecefToGeodetic(x: Vec3): Geodetic {
  const [X, Y, Z] = x;
  const p = Math.hypot(X, Y);
  const lon = Math.atan2(Y, X);
  if (p < 1e-9) {
    // On the polar axis.
    const lat = Z >= 0 ? 90 : -90;
    return { lat_deg: lat, lon_deg: 0, alt_m: Math.abs(Z) - WGS84_B };
  }
  let phi = Math.atan2(Z, p * (1 - WGS84_E2));
  for (let i = 0; i < 20; i++) {
    const s = Math.sin(phi);
    const n = WGS84_A / Math.sqrt(1 - WGS84_E2 * s * s);
    const next = Math.atan2(Z + WGS84_E2 * n * s, p);
    const done = Math.abs(next - phi) < 1e-15;
    phi = next;
    if (done) break;
  }
  const s = Math.sin(phi);
  const c = Math.cos(phi);
  const n = WGS84_A / Math.sqrt(1 - WGS84_E2 * s * s);
  // Height along the normal, stable at all latitudes: h = p cos(phi) + Z sin(phi) - a^2 / N.
  const h = p * c + Z * s - (WGS84_A * WGS84_A) / n;
  return { lat_deg: phi / DEG, lon_deg: lon / DEG, alt_m: h };
}

/**
 * A local tangent plane at an origin: x east, y north, z up (metres). The rotation rows are
 * the east, north and up unit vectors of the origin, in ECEF.
 */
export interface LocalFrame {
  origin: Geodetic;
  originEcef: Vec3;
  east: Vec3;
  north: Vec3;
  up: Vec3;
}

export function localFrame(origin: Geodetic): LocalFrame {
  const phi = origin.lat_deg * DEG;
  const lam = origin.lon_deg * DEG;
  const sp = Math.sin(phi);
  const cp = Math.cos(phi);
  const sl = Math.sin(lam);
  const cl = Math.cos(lam);
  return {
    origin,
    originEcef: geodeticToEcef(origin),
    east: [-sl, cl, 0],
    north: [-sp * cl, -sp * sl, cp],
    up: [cp * cl, cp * sl, sp],
  };
}

function dot3(a: Vec3, b: Vec3): number {
  return a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
}

/** Rotate an ECEF direction (no translation) into the frame's east, north, up components. */
export function ecefDirectionToEnu(frame: LocalFrame, d: Vec3): Vec3 {
  return [dot3(frame.east, d), dot3(frame.north, d), dot3(frame.up, d)];
}

/** ECEF point -> ENU coordinates (metres) in the frame. */
export function ecefToEnu(frame: LocalFrame, x: Vec3): Vec3 {
  const o = frame.originEcef;
  return ecefDirectionToEnu(frame, [x[0] - o[0], x[1] - o[1], x[2] - o[2]]);
}

/** ENU coordinates (metres) in the frame -> ECEF point. */
export function enuToEcef(frame: LocalFrame, enu: Vec3): Vec3 {
  const [e, n, u] = enu;
  const o = frame.originEcef;
  return [
    o[0] + e * frame.east[0] + n * frame.north[0] + u * frame.up[0],
    o[1] + e * frame.east[1] + n * frame.north[1] + u * frame.up[1],
    o[2] + e * frame.east[2] + n * frame.north[2] + u * frame.up[2],
  ];
}

export function geodeticToEnu(frame: LocalFrame, g: Geodetic): Vec3 {
  return ecefToEnu(frame, geodeticToEcef(g));
}

export function enuToGeodetic(frame: LocalFrame, enu: Vec3): Geodetic {
  return ecefToGeodetic(enuToEcef(frame, enu));
}

/**
 * The ENU point with the given east and north coordinates whose height above the ellipsoid is
 * altM: the plane curves away from the ellipsoid (about d^2 / 2R, 0.3 m at 2 km), so the up
 * coordinate is found by a few Newton steps on the exact conversion.
 */
export function enuAtHeight(frame: LocalFrame, east: number, north: number, altM: number): Vec3 {
  let up = altM - frame.origin.alt_m - (east * east + north * north) / (2 * WGS84_A);
  for (let i = 0; i < 5; i++) {
    const h = enuToGeodetic(frame, [east, north, up]).alt_m;
    const step = altM - h;
    up += step;
    if (Math.abs(step) < 1e-6) break;
  }
  return [east, north, up];
}

/**
 * Horizontal unit vector (east, north) in the frame of a compass bearing measured at a point
 * whose own north may differ from the frame's (meridians converge away from the origin).
 * The bearing's direction is built in the point's own tangent plane, taken to ECEF and
 * rotated into the frame.
 */
export function bearingDirectionInFrame(frame: LocalFrame, at: Geodetic, bearingDeg: number): [number, number] {
  const local = localFrame(at);
  const b = bearingDeg * DEG;
  const sb = Math.sin(b);
  const cb = Math.cos(b);
  const d: Vec3 = [
    sb * local.east[0] + cb * local.north[0],
    sb * local.east[1] + cb * local.north[1],
    sb * local.east[2] + cb * local.north[2],
  ];
  const enu = ecefDirectionToEnu(frame, d);
  const h = Math.hypot(enu[0], enu[1]);
  return [enu[0] / h, enu[1] / h];
}

/** Great-circle distance (m) on a sphere of the given radius (default the mean earth radius), haversine formula. */
export function haversineDistance(a: Geodetic, b: Geodetic, radiusM: number = MEAN_EARTH_RADIUS_M): number {
  const phi1 = a.lat_deg * DEG;
  const phi2 = b.lat_deg * DEG;
  const dPhi = phi2 - phi1;
  const dLam = (b.lon_deg - a.lon_deg) * DEG;
  const h = Math.sin(dPhi / 2) ** 2 + Math.cos(phi1) * Math.cos(phi2) * Math.sin(dLam / 2) ** 2;
  return 2 * radiusM * Math.asin(Math.min(1, Math.sqrt(h)));
}

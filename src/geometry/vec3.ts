/** Small 3-vector helpers (array frame: metres, x right, y front, z up). */
export type Vec3 = readonly [number, number, number];

export function sub(a: Vec3, b: Vec3): Vec3 {
  return [a[0] - b[0], a[1] - b[1], a[2] - b[2]];
}

export function dot(a: Vec3, b: Vec3): number {
  return a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
}

export function norm(a: Vec3): number {
  return Math.hypot(a[0], a[1], a[2]);
}

const DEG = Math.PI / 180;

/** Unit vector for azimuth (0 = +y front, +90 = +x right) and elevation (+90 = up), degrees. */
export function unitFromAzEl(azimuthDeg: number, elevationDeg: number): Vec3 {
  return unitFromAzElInto(azimuthDeg, elevationDeg, [0, 0, 0]);
}

/** unitFromAzEl written into out (no allocation); returns out. */
export function unitFromAzElInto(azimuthDeg: number, elevationDeg: number, out: [number, number, number]): Vec3 {
  const az = azimuthDeg * DEG;
  const el = elevationDeg * DEG;
  out[0] = Math.sin(az) * Math.cos(el);
  out[1] = Math.cos(az) * Math.cos(el);
  out[2] = Math.sin(el);
  return out;
}

/** Azimuth in (-180, 180] and elevation in [-90, 90], degrees, of a (not necessarily unit) vector. */
export function azElFromVector(v: Vec3): { azimuthDeg: number; elevationDeg: number } {
  const r = norm(v);
  let az = Math.atan2(v[0], v[1]) / DEG;
  if (az <= -180) az += 360;
  const el = r > 0 ? Math.asin(Math.max(-1, Math.min(1, v[2] / r))) / DEG : 0;
  return { azimuthDeg: az, elevationDeg: el };
}

/** Wrap an angle in degrees to (-180, 180]. */
export function wrapDeg(a: number): number {
  const r = a + 180;
  let x: number;
  if (r > -360 && r < 360) {
    // The same numbers as the general line below without its two remainders (a remainder of
    // doubles is a call into the C library, several times a multiply; the analysis wraps every
    // bin's azimuth a hop): r % 360 is r here, and (r + 360) % 360 is r + 360, less 360 when it
    // reaches 360 (exact: both lie within a factor of 2 of 360).
    let t = r + 360;
    if (t >= 360) t -= 360;
    x = t - 180;
  } else {
    x = ((r % 360) + 360) % 360 - 180;
  }
  if (x === -180) x = 180;
  return x;
}

/** Wrap an angle in degrees to [0, 360) (compass bearings and headings). */
export function wrap360(a: number): number {
  const x = ((a % 360) + 360) % 360;
  return x === 360 ? 0 : x;
}

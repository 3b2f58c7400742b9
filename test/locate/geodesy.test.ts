import { describe, expect, it } from 'vitest';
import proj4 from 'proj4';
import { Geodesic } from 'geographiclib-geodesic';
import {
  MEAN_EARTH_RADIUS_M,
  ecefToEnu,
  ecefToGeodetic,
  enuAtHeight,
  enuToGeodetic,
  geodeticToEcef,
  geodeticToEnu,
  haversineDistance,
  localFrame,
} from '../../src/locate/geodesy.js';
import { seeded } from './helpers.js';

const dms = (d: number, m: number, s: number): number => d + m / 60 + s / 3600;

// IOGP (EPSG) Guidance Note 7-2, "Coordinate Conversions and Transformations including
// Formulas", worked example of the geographic/geocentric conversion (EPSG method 9602) on the
// WGS 84 ellipsoid. The numbers are from memory; they agree with proj4 (an independent
// library, checked below) to under 1 mm.
describe('WGS 84 geodetic <-> ECEF against the EPSG Guidance Note 7-2 worked example (from memory)', () => {
  const point = { lat_deg: dms(53, 48, 33.82), lon_deg: dms(2, 7, 46.38), alt_m: 73.0 };
  const ecef: [number, number, number] = [3771793.968, 140253.342, 5124304.349];

  it('geodetic -> ECEF to 1 mm', () => {
    const x = geodeticToEcef(point);
    for (let i = 0; i < 3; i++) expect(Math.abs(x[i]! - ecef[i]!)).toBeLessThan(1e-3);
  });

  it('ECEF -> geodetic to 1e-8 degrees (about 1 mm) and 1 mm in height', () => {
    const g = ecefToGeodetic(ecef);
    expect(Math.abs(g.lat_deg - point.lat_deg)).toBeLessThan(1e-8);
    expect(Math.abs(g.lon_deg - point.lon_deg)).toBeLessThan(1e-8);
    expect(Math.abs(g.alt_m - point.alt_m)).toBeLessThan(1e-3);
  });
});

// IOGP (EPSG) Guidance Note 7-2, worked example of the geocentric/topocentric conversion
// (EPSG method 9836): topocentric origin 55 N, 5 E, 200 m on WGS 84 (geocentric
// X0 = 3652755.3058, Y0 = 319574.6799, Z0 = 5201547.3536), the point of the example above.
// Values from memory.
describe('ECEF -> local east/north/up against the EPSG Guidance Note 7-2 topocentric example (from memory)', () => {
  const frame = localFrame({ lat_deg: 55, lon_deg: 5, alt_m: 200 });

  it('origin in ECEF to 1 mm', () => {
    const want = [3652755.3058, 319574.6799, 5201547.3536];
    for (let i = 0; i < 3; i++) expect(Math.abs(frame.originEcef[i]! - want[i]!)).toBeLessThan(1e-3);
  });

  it('east, north, up of the point to 1 mm', () => {
    const enu = ecefToEnu(frame, [3771793.968, 140253.342, 5124304.349]);
    expect(Math.abs(enu[0] - -189013.869)).toBeLessThan(1e-3);
    expect(Math.abs(enu[1] - -128642.04)).toBeLessThan(1e-3);
    expect(Math.abs(enu[2] - -4220.171)).toBeLessThan(1e-3);
  });
});

// proj4 (npm proj4 2.22.0, an independent implementation of the same conversion).
describe('WGS 84 geodetic <-> ECEF against proj4 over the globe', () => {
  const geo = '+proj=longlat +datum=WGS84 +no_defs';
  const geocent = '+proj=geocent +datum=WGS84 +units=m +no_defs';
  const rand = seeded(7);
  const points = Array.from({ length: 200 }, () => ({
    lat_deg: -89.9 + 179.8 * rand(),
    lon_deg: -180 + 360 * rand(),
    alt_m: -400 + 9000 * rand(),
  }));

  it('forward agrees to 1 mm', () => {
    for (const p of points) {
      const ref = proj4(geo, geocent, [p.lon_deg, p.lat_deg, p.alt_m]);
      const x = geodeticToEcef(p);
      for (let i = 0; i < 3; i++) expect(Math.abs(x[i]! - ref[i]!)).toBeLessThan(1e-3);
    }
  });

  it('inverse agrees to 1e-9 degrees and 1 mm', () => {
    for (const p of points) {
      const x = geodeticToEcef(p);
      const ref = proj4(geocent, geo, [x[0], x[1], x[2]]);
      const g = ecefToGeodetic(x);
      expect(Math.abs(g.lon_deg - ref[0]!)).toBeLessThan(1e-9);
      expect(Math.abs(g.lat_deg - ref[1]!)).toBeLessThan(1e-9);
      expect(Math.abs(g.alt_m - ref[2]!)).toBeLessThan(1e-3);
    }
  });
});

describe('round trips and the curvature of the tangent plane', () => {
  it('geodetic -> ENU -> geodetic returns the point (200 random points within 50 km of a wetland origin)', () => {
    const frame = localFrame({ lat_deg: 61.2, lon_deg: 24.7, alt_m: 95 });
    const rand = seeded(11);
    for (let i = 0; i < 200; i++) {
      const p = { lat_deg: 61.2 + (rand() - 0.5) * 0.9, lon_deg: 24.7 + (rand() - 0.5) * 1.8, alt_m: 80 + 40 * rand() };
      const back = enuToGeodetic(frame, geodeticToEnu(frame, p));
      expect(Math.abs(back.lat_deg - p.lat_deg)).toBeLessThan(1e-10);
      expect(Math.abs(back.lon_deg - p.lon_deg)).toBeLessThan(1e-10);
      expect(Math.abs(back.alt_m - p.alt_m)).toBeLessThan(1e-6);
    }
  });

  // Common practice, no source: a level surface falls below the tangent plane by about
  // d^2 / (2R) (7.8 m at 10 km). A flat-earth shortcut would give 0 here.
  it('a point 10 km away at the origin height lies about d^2/2R below the plane', () => {
    const frame = localFrame({ lat_deg: 45, lon_deg: 0, alt_m: 0 });
    const enu = enuAtHeight(frame, 10_000, 0, 0);
    expect(enu[2]).toBeCloseTo(-(10_000 ** 2) / (2 * MEAN_EARTH_RADIUS_M), 1);
    expect(Math.abs(enuToGeodetic(frame, enu).alt_m)).toBeLessThan(1e-6);
  });
});

describe('haversine distance', () => {
  const R = MEAN_EARTH_RADIUS_M;

  // Spherical geometry (common practice, no source): a quarter meridian is pi R / 2,
  // antipodes are pi R apart, one degree of longitude on the equator is pi R / 180.
  it('quarter meridian, antipodes and one equatorial degree on the sphere', () => {
    expect(haversineDistance({ lat_deg: 0, lon_deg: 10, alt_m: 0 }, { lat_deg: 90, lon_deg: 10, alt_m: 0 })).toBeCloseTo((Math.PI * R) / 2, 3);
    expect(haversineDistance({ lat_deg: 0, lon_deg: 0, alt_m: 0 }, { lat_deg: 0, lon_deg: 180, alt_m: 0 })).toBeCloseTo(Math.PI * R, 3);
    expect(haversineDistance({ lat_deg: 0, lon_deg: 0, alt_m: 0 }, { lat_deg: 0, lon_deg: 1, alt_m: 0 })).toBeCloseTo((Math.PI * R) / 180, 3);
  });

  // GeographicLib (npm geographiclib-geodesic 2.2.0, C. F. F. Karney, "Algorithms for
  // geodesics", J. Geodesy 87, 2013) with flattening 0 solves the great circle exactly.
  it('agrees with GeographicLib on a sphere (flattening 0) to 1 mm', () => {
    const sphere = new Geodesic.Geodesic(R, 0);
    const rand = seeded(3);
    for (let i = 0; i < 300; i++) {
      const a = { lat_deg: -89 + 178 * rand(), lon_deg: -180 + 360 * rand(), alt_m: 0 };
      // Short baselines as between stations, and long ones.
      const scale = i % 2 === 0 ? 0.05 : 60;
      const b = { lat_deg: Math.max(-89.9, Math.min(89.9, a.lat_deg + scale * (rand() - 0.5))), lon_deg: a.lon_deg + scale * (rand() - 0.5), alt_m: 0 };
      const ref = sphere.Inverse(a.lat_deg, a.lon_deg, b.lat_deg, b.lon_deg).s12!;
      expect(Math.abs(haversineDistance(a, b) - ref)).toBeLessThan(1e-3);
    }
  });

  // Over a short baseline the ellipsoid's radius of curvature lies between the meridian
  // radius at the equator, M = a (1 - e^2) = 6335.4 km, and the polar radius
  // a / sqrt(1 - e^2) = 6399.6 km (textbook ellipsoid formulas), so the mean-radius sphere
  // is within (R1 - M) / M = 0.56 % of the true geodesic: bound 0.6 %.
  it('is within 0.6 % of the WGS 84 geodesic (GeographicLib) for station baselines', () => {
    const rand = seeded(5);
    for (let i = 0; i < 100; i++) {
      const a = { lat_deg: -80 + 160 * rand(), lon_deg: -180 + 360 * rand(), alt_m: 0 };
      const b = { lat_deg: a.lat_deg + 0.02 * (rand() - 0.5), lon_deg: a.lon_deg + 0.02 * (rand() - 0.5), alt_m: 0 };
      const ref = Geodesic.WGS84.Inverse(a.lat_deg, a.lon_deg, b.lat_deg, b.lon_deg).s12!;
      expect(Math.abs(haversineDistance(a, b) / ref - 1)).toBeLessThan(0.006);
    }
  });
});

import type { CsvColumn } from './csv.js';
import type { EventRecord } from './record-types.js';

/** CSV columns of event records: the interface.md fields, then the optional ones. */
export function eventColumns(): CsvColumn<EventRecord>[] {
  return [
    { name: 'start_s', get: (r) => r.start_s },
    { name: 'end_s', get: (r) => r.end_s },
    { name: 'utc', get: (r) => r.utc },
    { name: 'azimuth_deg', get: (r) => r.azimuth_deg },
    { name: 'elevation_deg', get: (r) => r.elevation_deg },
    { name: 'bearing_deg', get: (r) => r.bearing_deg },
    { name: 'spread_deg', get: (r) => r.spread_deg },
    { name: 'confidence', get: (r) => r.confidence },
    { name: 'track', get: (r) => r.track },
    { name: 'peak_dbfs', get: (r) => r.peak_dbfs },
    { name: 'band_lo_hz', get: (r) => r.band_hz?.[0] },
    { name: 'band_hi_hz', get: (r) => r.band_hz?.[1] },
    { name: 'mirror', get: (r) => r.mirror ?? '' },
    { name: 'mirror_axis_deg', get: (r) => r.mirror_axis_deg },
    { name: 'start_azimuth_deg', get: (r) => r.start_azimuth_deg },
    { name: 'end_azimuth_deg', get: (r) => r.end_azimuth_deg },
    { name: 'rate_deg_s', get: (r) => r.rate_deg_s },
    { name: 'station', get: (r) => r.station },
  ];
}

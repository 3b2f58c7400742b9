import type { CsvColumn } from './csv.js';
import type { MicPair } from '../geometry/array-geometry.js';
import type { FrameRecord } from './record-types.js';

/** CSV columns of frame records: the interface.md fields, one tdoa column per pair. */
export function frameColumns(pairs: readonly MicPair[], withBearing: boolean): CsvColumn<FrameRecord>[] {
  const cols: CsvColumn<FrameRecord>[] = [
    { name: 'time_s', get: (r) => r.time_s },
    { name: 'azimuth_deg', get: (r) => r.azimuth_deg },
    { name: 'elevation_deg', get: (r) => r.elevation_deg },
  ];
  if (withBearing) cols.push({ name: 'bearing_deg', get: (r) => r.bearing_deg });
  cols.push(
    { name: 'confidence', get: (r) => r.confidence },
    { name: 'level_dbfs', get: (r) => r.level_dbfs },
    { name: 'onset', get: (r) => r.onset },
    { name: 'track', get: (r) => r.track },
    { name: 'sources', get: (r) => r.sources?.length ?? 0 },
    { name: 'mirror', get: (r) => r.mirror ?? '' },
    { name: 'mirror_axis_deg', get: (r) => r.mirror_axis_deg },
  );
  pairs.forEach(([a, b], p) => cols.push({ name: `tdoa_s_${a}_${b}`, get: (r) => r.tdoa_s[p] }));
  return cols;
}

import { describe, expect, it } from 'vitest';
import { formatSummaryTable } from '../../src/track/summary-table.js';
import type { TrackSummary } from '../../src/track/types.js';

const base: TrackSummary = {
  track: 1, events: 12, azimuthDeg: -42.26, spreadDeg: 2.14, elevationDeg: null, activeS: 14.55,
  hops: 1455, firstSeenS: 3.14, lastSeenS: 3725.96, alive: false, mirror: null, mirrorAxisDeg: null,
};

describe('summary table for scan --summary (layout of our own)', () => {
  it('prints one aligned row per track with clock times and a totals line', () => {
    const text = formatSummaryTable([base, { ...base, track: 12, events: 3, azimuthDeg: 170, elevationDeg: 35.5, alive: true }]);
    const lines = text.trimEnd().split('\n');
    expect(lines).toHaveLength(4);
    expect(lines[0]).toMatch(/^track\s+events\s+azimuth\s+spread\s+elev\s+calling\s+first seen\s+last seen\s+state$/);
    expect(lines[1]).toMatch(/^\s+1\s+12\s+-42\.3 deg\s+2\.1 deg\s+-\s+14\.6 s\s+0:00:03\.1\s+1:02:06\.0\s+ended$/);
    expect(lines[2]).toMatch(/35\.5 deg/);
    expect(lines[2]).toMatch(/live$/);
    // Columns line up: every row has its "deg" of the azimuth column at the same place.
    expect(lines[1]!.indexOf('deg')).toBe(lines[2]!.indexOf('deg'));
    expect(lines[3]).toMatch(/^2 tracks, 15 events/);
  });

  it('says so when no track was confirmed, and flags a mirrored pair', () => {
    expect(formatSummaryTable([])).toBe('no source tracks were confirmed\n');
    expect(formatSummaryTable([{ ...base, mirror: 'front-back', mirrorAxisDeg: 90 }])).toMatch(/front-back mirror: each azimuth may equally be its mirror image across the array's axis at 90 deg \(180 - azimuth\)/);
    expect(formatSummaryTable([{ ...base, mirror: 'left-right', mirrorAxisDeg: 0 }])).toMatch(/left-right mirror: .* at 0 deg \(-azimuth\)/);
    expect(formatSummaryTable([base])).not.toMatch(/mirror/);
  });
});

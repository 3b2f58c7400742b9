import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadGeometryFile } from '../../src/geometry/geometry-file.js';
import { unitFromAzEl, wrapDeg } from '../../src/geometry/vec3.js';
import { runCli } from '../helpers/cli.js';
import { farFieldDelaysUp, soxDelayedSignal, soxIndependentNoise, soxMix } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';

// Two sources at fixed directions calling in alternating bursts, made by sox (independent of
// the project): far-field delays per mic of the 10 cm square (interface.md), fractional delays
// by the 10x-rate method of references.md. Truth: A at +40 deg, B at -110 deg; bursts of 0.3 s.
const tmp = tempDir();
afterAll(() => { if (!process.env.KEEP) tmp.cleanup(); else console.log(tmp.dir); });
const A = 40;
const B = -110;
const CALL = 0.3;
const PERIOD = 1.2;
const CALLS = 8;
const startsA = Array.from({ length: CALLS }, (_, i) => 0.2 + i * PERIOD);
const startsB = startsA.map((t) => t + PERIOD / 2);
let mix: string;

beforeAll(() => {
  const g = loadGeometryFile('configs/arrays/square-10cm.json');
  const caller = (name: string, az: number, first: number) =>
    soxDelayedSignal(
      {
        out: `${tmp.dir}/${name}.wav`,
        delaysUp: farFieldDelaysUp(g.mics.map((m) => m.position), unitFromAzEl(az, 0), 343, 480000),
        durationS: CALL,
        // each repeat is one call plus the silence to the next; the first call is put in place last
        effects: ['sinc', '300-6000', 'pad', '0', String(PERIOD - CALL), 'repeat', String(CALLS - 1), 'pad', String(first), '0'],
      },
      tmp.dir,
    );
  const a = caller('a', A, startsA[0]!);
  const b = caller('b', B, startsB[0]!);
  // mic self-noise, independent per channel, 34 dB below the calls
  const quiet = soxIndependentNoise(`${tmp.dir}/self-noise.wav`, 4, CALLS * PERIOD + 1, -50, tmp.dir);
  mix = soxMix(`${tmp.dir}/alternating.wav`, [{ path: a, volume: 1 }, { path: b, volume: 1 }, { path: quiet, volume: 1 }]);
});

describe('scan events: two sources calling in alternating bursts (sox-made)', () => {
  it('one event per call, right track, bearing within 2 deg, start/end within 20 ms', () => {
    const r = runCli(['scan', mix, '--array', 'configs/arrays/square-10cm.json']);
    expect(r.status, r.stderr).toBe(0);
    const events = r.stdout.trim().split('\n').map((l) => JSON.parse(l));
    const truth = [...startsA.map((t) => ({ t, az: A })), ...startsB.map((t) => ({ t, az: B }))];
    let matched = 0;
    let good = 0;
    const trackOf = new Map<number, number>();
    let rightTrack = 0;
    for (const call of truth) {
      const e = events.find((x) => Math.abs(x.start_s - call.t) < 0.1);
      if (!e) continue;
      matched++;
      const okTime = Math.abs(e.start_s - call.t) <= 0.02 && Math.abs(e.end_s - (call.t + CALL)) <= 0.02;
      const okAz = Math.abs(wrapDeg(e.azimuth_deg - call.az)) <= 2;
      if (okTime && okAz) good++;
      if (!trackOf.has(call.az)) trackOf.set(call.az, e.track);
      if (trackOf.get(call.az) === e.track) rightTrack++;
    }
    expect(matched).toBe(truth.length);
    expect(events.length).toBe(truth.length);
    expect(new Set(trackOf.values()).size).toBe(2);
    expect(rightTrack / truth.length).toBeGreaterThanOrEqual(0.95);
    expect(good / truth.length).toBeGreaterThanOrEqual(0.95);
  });
});

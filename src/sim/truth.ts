/**
 * The true directions of a rendered scene, in the array's frame (interface.md: azimuth 0 =
 * front, +90 = right; elevation +90 = up), one record per TRUTH_STEP_S per source while
 * that source's direct sound is arriving at the array centre.
 */
import { azElFromVector, type Vec3 } from '../geometry/vec3.js';
import { emissionTime, MotionCursor } from './motion.js';
import { DIRECT } from './room.js';
import { sceneToArrayFrame, type Scene } from './scene.js';
import type { Call } from './signals.js';

export const TRUTH_STEP_S = 0.01;

export interface TruthRecord {
  time_s: number;
  source: string;
  azimuth_deg: number;
  elevation_deg: number;
}

const round = (x: number, digits: number): number => Number(x.toFixed(digits));

/** Truth records, ordered by time, then by source order of the scene. */
export function truthRecords(scene: Scene, calls: readonly (readonly Call[])[]): TruthRecord[] {
  const out: TruthRecord[] = [];
  const centre = scene.array.position;
  const fs = scene.sampleRate;
  const state = scene.sources.map((s) => ({ cursor: new MotionCursor(s.motion), te: -Infinity, callIdx: 0 }));
  const steps = Math.ceil(scene.durationS / TRUTH_STEP_S - 1e-9);
  for (let k = 0; k < steps; k++) {
    const t = k * TRUTH_STEP_S;
    scene.sources.forEach((source, si) => {
      const st = state[si]!;
      const list = calls[si]!;
      const sol = emissionTime(st.cursor, DIRECT, centre, t, scene.speedOfSound, Number.isFinite(st.te) ? st.te : t);
      st.te = sol.te;
      const at = sol.te * fs;
      while (st.callIdx < list.length && list[st.callIdx]!.end <= at) st.callIdx++;
      const call = list[st.callIdx];
      if (!call || at < call.start) return;
      const p = st.cursor.at(sol.te);
      const v: Vec3 = sceneToArrayFrame([p[0] - centre[0], p[1] - centre[1], p[2] - centre[2]], scene.array.headingDeg);
      const { azimuthDeg, elevationDeg } = azElFromVector(v);
      out.push({ time_s: round(t, 2), source: source.name, azimuth_deg: round(azimuthDeg, 3), elevation_deg: round(elevationDeg, 3) });
    });
  }
  return out;
}

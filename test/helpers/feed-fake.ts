/**
 * A stand-in for the analysis, for developing the viewer and for tests: a made-up wetland
 * station (a 10 cm square array at the edge of a reed bed) where a steady frog chorus calls
 * from a known azimuth and a bird flies past, with a call event now and then. Frames go to a
 * real feed server at 50 messages per second by default. Invented data: demo and tests only.
 *
 * Alone: `npx tsx test/helpers/feed-fake.ts [--port 8417] [--token TEXT]` and open the URL.
 */
import { pathToFileURL } from 'node:url';
import type { ArrayGeometry } from '../../src/geometry/array-geometry.js';
import { micPairs } from '../../src/geometry/array-geometry.js';
import { dot, sub, unitFromAzEl, wrapDeg } from '../../src/geometry/vec3.js';
import { startFeedServer, type FeedServer, type FeedServerSetup } from '../../src/feed/feed-server.js';
import { EvidenceMapper, type LagCorrelation } from '../../src/direction/evidence-map.js';
import type { BandVote, EventRecord, FrameRecord } from '../../src/records/record-types.js';

export const FAKE_SPEED_OF_SOUND = 343;

/** The 10 cm square of interface.md, turned so its front faces 30 degrees east of north. */
export function fakeGeometry(headingDeg: number | null = 30): ArrayGeometry {
  return {
    name: 'reed-bed-square-10cm',
    headingDeg,
    mics: [
      { channel: 0, position: [-0.05, 0.05, 0] },
      { channel: 1, position: [0.05, 0.05, 0] },
      { channel: 2, position: [0.05, -0.05, 0] },
      { channel: 3, position: [-0.05, -0.05, 0] },
    ],
  };
}

export interface FakeScene {
  /** Azimuth of the steady frog chorus (track 1), degrees. */
  readonly chorusAzimuthDeg: number;
  /** Add a bird (track 2) that flies from behind-left to front-right and round again. */
  readonly passingBird: boolean;
  /** Emit call events (one every 1.5 s for the chorus, every 2 s for the bird). */
  readonly events: boolean;
  readonly geometry: ArrayGeometry;
  /** Hop length, seconds (the fake's frame interval in stream time). */
  readonly hopS: number;
}

export const DEFAULT_SCENE: FakeScene = {
  chorusAzimuthDeg: 52.5,
  passingBird: true,
  events: true,
  geometry: fakeGeometry(),
  hopS: 0.02,
};

/** tdoa_s per pair for a far source: (p_a - p_b) . u / c (interface.md). */
export function pairDelays(geometry: ArrayGeometry, azimuthDeg: number): number[] {
  const u = unitFromAzEl(azimuthDeg, 0);
  return micPairs(geometry).map(([a, b]) => dot(sub(geometry.mics[a].position, geometry.mics[b].position), u) / FAKE_SPEED_OF_SOUND);
}

export function birdAzimuth(timeS: number): number {
  return wrapDeg(-150 + (timeS % 8) * 22.5);
}

function bearingOf(scene: FakeScene, az: number): number | undefined {
  const h = scene.geometry.headingDeg;
  return h === null ? undefined : (((az + h) % 360) + 360) % 360;
}

function bandVotes(i: number, chorusTdoa: number, birdTdoa: number | null): BandVote[] {
  const votes: BandVote[] = [];
  let lo = 300;
  for (let b = 0; b < 12; b++) {
    const hi = lo * 1.33;
    const weight = 0.2 + 0.8 * Math.abs(Math.sin(b * 1.7 + i * 0.05));
    const tdoa = b === 11 ? null : birdTdoa !== null && b >= 8 ? birdTdoa : chorusTdoa;
    votes.push({ lo_hz: Math.round(lo), hi_hz: Math.round(hi), weight: Number(weight.toFixed(3)), tdoa_s: tdoa });
    lo = hi;
  }
  return votes;
}

/** Frame number i of the scene: the chorus is the top-level estimate, the bird a second source. */
export function fakeFrame(scene: FakeScene, i: number): FrameRecord {
  const t = i * scene.hopS;
  const az = scene.chorusAzimuthDeg;
  const tdoa = pairDelays(scene.geometry, az);
  const bird = birdAzimuth(t);
  const birdTdoa = scene.passingBird ? pairDelays(scene.geometry, bird)[0] : null;
  const frame: FrameRecord = {
    time_s: Number(t.toFixed(4)),
    azimuth_deg: az,
    elevation_deg: null,
    confidence: 0.9,
    tdoa_s: tdoa,
    level_dbfs: -24 + 3 * Math.sin(t * 2),
    levels_dbfs: scene.geometry.mics.map((_, ch) => Number((-24 - ch * 1.5 + 4 * Math.sin(t * 3 + ch)).toFixed(1))),
    band_votes: bandVotes(i, tdoa[0], birdTdoa),
    track: 1,
    sources: [{ azimuth_deg: az, elevation_deg: null, score: 0.9, track: 1 }],
  };
  const bearing = bearingOf(scene, az);
  if (bearing !== undefined) frame.bearing_deg = bearing;
  if (scene.passingBird) {
    frame.sources?.push({ azimuth_deg: bird, elevation_deg: null, score: 0.55 + 0.3 * Math.abs(Math.sin(t)), track: 2 });
  }
  return frame;
}

/** The events that end at frame i (none on most frames). */
export function fakeEvents(scene: FakeScene, i: number): EventRecord[] {
  if (!scene.events) return [];
  const t = i * scene.hopS;
  const every = (s: number): boolean => i > 0 && i % Math.round(s / scene.hopS) === 0;
  const out: EventRecord[] = [];
  if (every(1.5)) {
    out.push({ start_s: Number((t - 0.4).toFixed(3)), end_s: t, azimuth_deg: scene.chorusAzimuthDeg, spread_deg: 1.8, confidence: 0.88, track: 1, band_hz: [600, 1400] });
  }
  if (scene.passingBird && every(2)) {
    out.push({ start_s: Number((t - 0.25).toFixed(3)), end_s: t, azimuth_deg: birdAzimuth(t), spread_deg: 4.2, confidence: 0.7, track: 2, band_hz: [3000, 6500] });
  }
  return out;
}

const FAKE_RATE_HZ = 48000;

/**
 * The fake's evidence for frame i: per pair a correlation with a peak at the chorus' delay
 * (height 1) and, with the bird, a lower one at the bird's (0.6), 1.5 samples wide, on a
 * little ripple. Invented shapes for the viewer's pictures, not a model of GCC-PHAT.
 */
export function fakeCorrelations(scene: FakeScene, i: number): LagCorrelation[] {
  const t = i * scene.hopS;
  const chorus = pairDelays(scene.geometry, scene.chorusAzimuthDeg);
  const bird = scene.passingBird ? pairDelays(scene.geometry, birdAzimuth(t)) : null;
  return chorus.map((c, p) => ({
    at(lag: number): number {
      const g = (d: number, h: number): number => h * Math.exp(-0.5 * ((lag - d * FAKE_RATE_HZ) / 1.5) ** 2);
      return g(chorus[p]!, 1) + (bird ? g(bird[p]!, 0.6) : 0) + 0.05 * Math.sin(lag * 1.3 + i * 0.2 + p) - 0.05;
    },
  }));
}

export interface FeedFake {
  readonly server: FeedServer;
  /** Frames and events pushed so far. */
  readonly pushed: { frames: number; events: number };
  stop(): Promise<void>;
}

export interface FeedFakeSetup extends Partial<Omit<FeedServerSetup, 'geometry'>> {
  readonly scene?: Partial<FakeScene>;
  /** Messages per second (frames; events ride along). Default 50. */
  readonly rateHz?: number;
}

/** Start a feed server and push the scene into it until stop(). */
export async function startFeedFake(setup: FeedFakeSetup = {}): Promise<FeedFake> {
  const { scene: sceneOverrides, rateHz = 50, ...serverSetup } = setup;
  const scene: FakeScene = { ...DEFAULT_SCENE, ...sceneOverrides };
  const server = await startFeedServer({
    port: 0,
    onWarning: () => undefined,
    settings: { station: 'wetland east (fake)', sample_rate_hz: 48000, hop_s: scene.hopS },
    ...serverSetup,
    geometry: scene.geometry,
  });
  const pushed = { frames: 0, events: 0 };
  const pairs = micPairs(scene.geometry);
  const maxLag = pairs.map(([a, b]) => Math.ceil((Math.hypot(...sub(scene.geometry.mics[a]!.position, scene.geometry.mics[b]!.position)) / FAKE_SPEED_OF_SOUND) * FAKE_RATE_HZ) + 2);
  const mapper = new EvidenceMapper(scene.geometry, pairs, FAKE_RATE_HZ, FAKE_SPEED_OF_SOUND, maxLag);
  const startedAt = performance.now();
  // Catch up by wall clock so the mean rate holds even when the timer runs late.
  const timer = setInterval(() => {
    const due = Math.floor(((performance.now() - startedAt) / 1000) * rateHz);
    while (pushed.frames < due) {
      const frame = fakeFrame(scene, pushed.frames);
      server.frame(frame);
      if (server.wantsMapAt(frame.time_s)) server.maps(frame.time_s, mapper.build(fakeCorrelations(scene, pushed.frames)));
      for (const e of fakeEvents(scene, pushed.frames)) {
        server.event(e);
        pushed.events++;
      }
      pushed.frames++;
    }
  }, Math.max(1, Math.floor(1000 / rateHz)));
  return {
    server,
    pushed,
    async stop() {
      clearInterval(timer);
      await server.close();
    },
  };
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const arg = (name: string): string | undefined => {
    const i = process.argv.indexOf(name);
    return i > 0 ? process.argv[i + 1] : undefined;
  };
  const fake = await startFeedFake({
    port: Number(arg('--port') ?? 8417),
    token: arg('--token') ?? null,
    onLog: (line) => process.stderr.write(`${line}\n`),
  });
  process.stdout.write(`fake wetland feed at ${fake.server.url}\n`);
  process.on('SIGINT', () => void fake.stop().then(() => process.exit(0)));
}

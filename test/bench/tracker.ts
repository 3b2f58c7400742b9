/**
 * Tracker benchmark: cost per hop for 3 sources x 4 candidates (3 callers and one clutter
 * candidate per hop) over a long run, and heap growth across the run: the tracker's state lives
 * in typed arrays sized once, event records (one per call) are the output allocated, and what
 * else a hop allocates (numbers the engine boxes where a call it did not inline returns one) shows
 * here. The second run cuts every event but reports none (minimum event length beyond the run):
 * tracking and event cutting without the records. (Until 2026-12 that run set the event SNRs to
 * 60 dB, which also keeps every candidate from the tracks: it timed a tracker with nothing to
 * track, 0.3 us per hop, while tracking took 2.9 us and 670 bytes per hop.)
 *
 * Run alone: `npx tsx test/bench/tracker.ts [hops]`; the main runner calls runTrackerBench().
 * Figures are reported, never asserted: speed targets belong here, not in timed tests.
 */
import { pathToFileURL } from 'node:url';
import { setFlagsFromString } from 'node:v8';
import { runInNewContext } from 'node:vm';
import type { HopObservation } from '../../src/track/types.js';
import { Tracker } from '../../src/track/tracker.js';
import { bursts, generateHops, type TruthSource } from '../track/synth.js';

export interface TrackerBenchResult {
  hops: number;
  sources: number;
  candidatesPerHop: number;
  hopS: number;
  usPerHop: number;
  /** Tracker time over audio time for one core (cost per hop / hop duration). */
  realTimeFraction: number;
  /** Median heap growth per chunk of hops, per hop (chunks with a collection left out). */
  bytesPerHop: number;
  /** The same with no event reported (every event shorter than the minimum): tracking and cutting without records. */
  trackingBytesPerHop: number;
  trackingUsPerHop: number;
  /** Chunks in which the heap shrank (a collection ran), both runs. */
  collections: number;
  /** Heap still held after the run and a full collection, minus before. */
  retainedBytes: number;
  events: number;
}

const HOP_S = 0.01;
const POOL = 4096;

function makePool(): HopObservation[] {
  // Three static callers with overlapping bursts, one clutter candidate per hop.
  const sources: TruthSource[] = [
    { azimuthAt: () => -120, calls: bursts(0.1, 0.4, 0.3, 60), levelDbfs: -28 },
    { azimuthAt: () => 10, calls: bursts(0.3, 0.5, 0.4, 60), levelDbfs: -31 },
    { azimuthAt: () => 95, calls: bursts(0.2, 0.3, 0.5, 60), levelDbfs: -34 },
  ];
  const { hops } = generateHops(sources, { durationS: POOL * HOP_S, hopS: HOP_S, seed: 1, noiseDeg: 2, clutter: 1, dropout: 0 });
  // Pad every hop to 3 + 1 candidates so each hop costs the same.
  return hops.map((h) => {
    const c = h.candidates.slice();
    while (c.length < 4) c.push({ azimuthDeg: -180 + 360 * ((c.length * 0.37 + h.timeS) % 1), elevationDeg: null, score: 0.1 });
    // A literal, not a spread copy: V8 keeps a spread copy's number fields boxed, so the
    // bench's own time stamp writes would allocate.
    return { timeS: h.timeS, levelDbfs: h.levelDbfs, snrDb: h.snrDb, onset: h.onset, confidence: h.confidence, candidates: c.slice(0, 4), bandHz: h.bandHz ?? null };
  });
}

function exposeGc(): () => void {
  setFlagsFromString('--expose-gc');
  return runInNewContext('gc') as () => void;
}

/** Feed hops [from, to) of an endless stream built from the pool (times rewritten in place). */
function feed(tracker: Tracker, pool: HopObservation[], from: number, to: number): number {
  let events = 0;
  for (let k = from; k < to; k++) {
    const hop = pool[k % POOL]! as { timeS: number };
    hop.timeS = (k + 0.5) * HOP_S;
    events += tracker.update(hop as HopObservation).events.length;
  }
  return events;
}

interface Phase {
  us: number;
  bytes: number;
  retained: number;
  collections: number;
  events: number;
}

const CHUNK = 10_000;

/**
 * Time the run as a whole; read the heap after every chunk of hops. A chunk whose heap use
 * went down saw a collection; the median growth of the others, per hop, is the allocation
 * rate (robust against the few chunks in which the engine compiles or collects).
 */
async function measure(gc: () => void, pool: HopObservation[], tracker: Tracker, hops: number): Promise<Phase> {
  const warm = 50_000;
  feed(tracker, pool, 0, warm);
  const chunks = Math.max(1, Math.floor(hops / CHUNK));
  const deltas = new Float64Array(chunks);
  gc();
  const start = process.memoryUsage().heapUsed;
  let events = 0;
  let elapsed = 0n;
  let last = start;
  for (let c = 0; c < chunks; c++) {
    const from = warm + c * CHUNK;
    const t0 = process.hrtime.bigint();
    events += feed(tracker, pool, from, from + CHUNK);
    elapsed += process.hrtime.bigint() - t0;
    const now = process.memoryUsage().heapUsed;
    deltas[c] = now - last;
    last = now;
  }
  gc();
  const retained = process.memoryUsage().heapUsed - start;
  const grown = Array.from(deltas).filter((d) => d >= 0).sort((a, b) => a - b);
  const median = grown.length === 0 ? NaN : grown[Math.floor(grown.length / 2)]!;
  return {
    us: Number(elapsed) / 1e3 / (chunks * CHUNK),
    bytes: median / CHUNK,
    retained,
    collections: chunks - grown.length,
    events,
  };
}

export async function runTrackerBench(hops = 1_000_000): Promise<TrackerBenchResult> {
  const gc = exposeGc();
  const pool = makePool();
  const full = await measure(gc, pool, new Tracker({ maxTracks: 8, maxCandidates: 4 }), hops);
  const trackingOnly = await measure(gc, pool, new Tracker({ maxTracks: 8, maxCandidates: 4, minEventS: 3600 }), hops);
  return {
    hops,
    sources: 3,
    candidatesPerHop: 4,
    hopS: HOP_S,
    usPerHop: full.us,
    realTimeFraction: full.us / 1e6 / HOP_S,
    bytesPerHop: full.bytes,
    trackingBytesPerHop: trackingOnly.bytes,
    trackingUsPerHop: trackingOnly.us,
    collections: full.collections + trackingOnly.collections,
    retainedBytes: full.retained,
    events: full.events,
  };
}

export function formatTrackerBench(r: TrackerBenchResult): string {
  return [
    `tracker: ${r.sources} sources x ${r.candidatesPerHop} candidates, ${r.hops} hops of ${r.hopS * 1000} ms (${((r.hops * r.hopS) / 3600).toFixed(1)} h of audio)`,
    `  ${r.usPerHop.toFixed(2)} us per hop = ${(r.realTimeFraction * 100).toFixed(3)} % of one core in real time`,
    `  heap: ${r.bytesPerHop.toFixed(3)} bytes per hop during the run, ${(r.bytesPerHop * r.hops / Math.max(r.events, 1)).toFixed(0)} bytes per event for ${r.events} events; ${(r.retainedBytes / 1024).toFixed(1)} KiB retained after a full collection`,
    `  tracking without event records (every event shorter than --min-event): ${r.trackingUsPerHop.toFixed(2)} us per hop, ${r.trackingBytesPerHop.toFixed(3)} bytes per hop; ${r.collections} chunks of ${CHUNK} hops saw a collection`,
  ].join('\n');
}

if (process.argv[1] !== undefined && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const hops = process.argv[2] === undefined ? undefined : Number(process.argv[2]);
  if (hops !== undefined && !(Number.isInteger(hops) && hops > 0)) {
    process.stderr.write(`tracker bench: '${process.argv[2]}' is not a hop count; give a whole number, e.g. 500000.\n`);
    process.exit(2);
  }
  console.log(formatTrackerBench(await runTrackerBench(hops)));
}

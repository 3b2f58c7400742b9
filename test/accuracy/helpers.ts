/** Shared helpers of the accuracy tests: scenes rendered and scanned through the built CLI. */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { expect } from 'vitest';
import type { AccuracyReport } from '../../src/accuracy/score.js';
import { scoreTracks } from '../../src/accuracy/track-scores.js';
import { accuracyReportFromJson, type AccuracyReportJson } from '../../src/accuracy/report-json.js';
import { indexTruth, TRUTH_STEP_S, type TruthRecord } from '../../src/accuracy/truth.js';
import type { EventRecord, FrameRecord } from '../../src/records/record-types.js';
import { runCli } from '../helpers/cli.js';

function ok(args: string[]): string {
  const r = runCli(args);
  if (r.status !== 0) throw new Error(`bearline ${args.join(' ')} failed (${r.status}): ${r.stderr}`);
  return r.stdout;
}

/** Write a scene and render it with `bearline simulate --float`; returns REC.wav. */
export function render(dir: string, name: string, scene: unknown): string {
  const scenePath = join(dir, `${name}.scene.json`);
  writeFileSync(scenePath, JSON.stringify(scene));
  const wav = join(dir, `${name}.wav`);
  ok(['simulate', '--scene', scenePath, '--out', wav, '--float']);
  return wav;
}

/** `bearline accuracy --json` (snake_case keys, checked in test/cli/accuracy-input.test.ts), read back into the scorer's type. */
export function accuracyJson(wav: string, ...args: string[]): AccuracyReport {
  return accuracyReportFromJson(JSON.parse(ok(['accuracy', wav, '--json', ...args])) as AccuracyReportJson);
}

function lines<T>(text: string): T[] {
  return text
    .split('\n')
    .filter((l) => l.trim() !== '')
    .map((l) => JSON.parse(l) as T);
}

export function scanFrames(wav: string, ...args: string[]): FrameRecord[] {
  return lines<FrameRecord>(ok(['scan', wav, '--array', wav.replace(/\.wav$/, '.array.json'), '--frames', ...args]));
}

export function scanEvents(wav: string, ...args: string[]): EventRecord[] {
  return scanWithWarnings(wav, ...args).events;
}

/** The events of a scan and what it said on stderr (its warnings). */
export function scanWithWarnings(wav: string, ...args: string[]): { events: EventRecord[]; stderr: string } {
  const argv = ['scan', wav, '--array', wav.replace(/\.wav$/, '.array.json'), ...args];
  const r = runCli(argv);
  if (r.status !== 0) throw new Error(`bearline ${argv.join(' ')} failed (${r.status}): ${r.stderr}`);
  return { events: lines<EventRecord>(r.stdout), stderr: r.stderr };
}

/**
 * A simulator scene (its scene file) of `sources` before an array 1 m up, heading 0, the speed
 * of sound 343 m/s, with `noise` (floor, wind).
 */
export function fieldScene(o: { rateHz?: number; durationS: number; seed: number; geometry: string; sources: unknown[]; noise: Record<string, number> }): unknown {
  return {
    sample_rate_hz: o.rateHz ?? 48000,
    duration_s: o.durationS,
    seed: o.seed,
    speed_of_sound_m_s: 343,
    array: { geometry: o.geometry, position_m: [0, 0, 1], heading_deg: 0 },
    sources: o.sources,
    noise: o.noise,
  };
}

/** The events of a scan of `wav` at 343 m/s, scored against its truth (track purity, completeness, id switches), with what the scan said on stderr. */
export function scanScored(wav: string) {
  const scan = scanWithWarnings(wav, '--speed-of-sound', '343');
  return { ...scan, scores: scoreTracks(scan.events, indexTruth(truthOf(wav)), TRUTH_STEP_S) };
}

export function truthOf(wav: string): TruthRecord[] {
  return lines<TruthRecord>(readFileSync(wav.replace(/\.wav$/, '.truth.jsonl'), 'utf8'));
}

export function share(r: AccuracyReport, deg: number): number {
  const w = r.within.find((x) => x.deg === deg);
  expect(w).toBeDefined();
  return w!.share;
}

export const DEG = Math.PI / 180;

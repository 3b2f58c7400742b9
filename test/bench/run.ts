/**
 * `npm run bench`: every benchmark of the project, one after the other, printing figures
 * and ratios measured in this run (never a pass/fail on a bare time). Not part of `npm test`.
 * Run one part alone with `npx tsx test/bench/<part>.ts`, or name parts:
 * `npm run bench core tracker` (parts: core, stages, memory, tracker, io, feed, station, station-cpu, live, accuracy). Options after the part names go to the accuracy matrix:
 * `npm run bench accuracy -- --quick --set memoryS=0.1` (see test/bench/accuracy-matrix.ts;
 * the full matrix renders its corpus once, several minutes, then analyses in about a minute).
 */
import { accuracyMatrixCli } from './accuracy-matrix.js';
import { motionMatrixCli } from './motion-matrix.js';
import { benchCase, benchMemory, CORE_TARGETS, coreCases, FALLBACK_TITLE, fallbackRows, KERNELS_JS_TITLE, printCore } from './core.js';
import { benchStages, formatStages } from './stages.js';
import { runStationCpuBench } from './station-cpu.js';
import { runFeedLatencyBench } from './feed-latency.js';
import { formatFleetBench, runFleetLocateBench } from './fleet-locate.js';
import { benchIoRead } from './io-read.js';
import { benchCheckArrayRss } from './check-array-rss.js';
import { formatSoak, runStationSoak } from './station-soak.js';
import { runLiveBench } from './live.js';
import { formatTrackerBench, runTrackerBench } from './tracker.js';

const argv = process.argv.slice(2);
const firstOption = argv.findIndex((a) => a.startsWith('-'));
const only = firstOption < 0 ? argv : argv.slice(0, firstOption);
const accuracyArgs = firstOption < 0 ? [] : argv.slice(firstOption);
const want = (part: string) => only.length === 0 || only.includes(part);

async function main(): Promise<void> {
  console.log(`bearline benchmarks, node ${process.version}, ${new Date().toISOString()}`);
  let stereoUsPerHop: number | null = null;
  if (want('core')) {
    const rows = coreCases().map(([name, g]) => benchCase(name, g));
    printCore(rows);
    stereoUsPerHop = rows[0]!.usPerHop;
    console.log(CORE_TARGETS);
    console.log('');
    printCore(fallbackRows(rows, { BEARLINE_KERNELS: 'js' }), KERNELS_JS_TITLE);
    console.log('');
    printCore(fallbackRows(rows), FALLBACK_TITLE);
  }
  if (want('stages')) {
    console.log('\n' + formatStages(coreCases().map(([n, g]) => benchStages(n, g)), 'cost per stage, us per hop (defaults; best of 5 passes over 10 s of noise):'));
  }
  if (want('station-cpu')) {
    console.log('\n' + (await runStationCpuBench()).join('\n'));
  }
  if (want('memory')) {
    const m = benchMemory();
    console.log(`\npeak RSS of bearline scan: 1-minute stereo ${m.oneMinMb.toFixed(0)} MB, 10-minute stereo ${m.tenMinMb.toFixed(0)} MB (ratio ${(m.tenMinMb / m.oneMinMb).toFixed(2)}; target: flat)`);
  }
  if (want('check-array')) {
    console.log('\n' + benchCheckArrayRss(30).lines.join('\n'));
  }
  if (want('tracker')) {
    const t = await runTrackerBench(300_000);
    console.log('\n' + formatTrackerBench(t));
    if (stereoUsPerHop !== null) {
      console.log(`  tracker cost / stereo pipeline cost per hop: ${((100 * t.usPerHop) / stereoUsPerHop).toFixed(1)}% (target below 5%)`);
    }
  }
  if (want('io')) {
    const r = await benchIoRead({ minutes: 10, log: () => undefined });
    console.log('\n' + r.lines.join('\n'));
  }
  if (want('feed')) {
    const r = await runFeedLatencyBench();
    console.log('\n' + r.lines.join('\n'));
  }
  if (want('fleet')) {
    console.log('\n' + formatFleetBench(runFleetLocateBench()));
  }
  if (want('station')) {
    console.log('\n' + formatSoak(runStationSoak()));
  }
  if (want('live')) {
    const r = await runLiveBench();
    console.log('\n' + r.lines.join('\n'));
  }
  if (want('motion')) {
    console.log('');
    const code = motionMatrixCli(only.length === 1 && only[0] === 'motion' ? accuracyArgs : []);
    if (code !== 0) process.exitCode = code;
  }
  if (want('accuracy')) {
    console.log('');
    const code = accuracyMatrixCli(accuracyArgs);
    if (code !== 0) process.exitCode = code;
  }
}

main().catch((err: unknown) => {
  console.error(err);
  process.exit(1);
});

/**
 * Between the analysis and the feed: after each hop, when a viewer wants the evidence, the
 * hop's pair correlations (HopAnalyzer.lastCorrelations) become the delay and direction maps
 * (direction/evidence-map.ts) and go to the feed. When nobody asks, a hop costs one check.
 */
import type { AnalysisSetup } from '../analysis/analysis.js';
import { EvidenceMapper } from '../direction/evidence-map.js';
import { round } from '../records/frame-record.js';
import type { FeedServer } from './feed-server.js';

/** Call after each hop with the hop's stream time (the time its frame record carries). */
export function evidenceTap(feed: FeedServer, setup: AnalysisSetup): (timeS: number) => void {
  let mapper: EvidenceMapper | null = null;
  return (timeS) => {
    const t = round(timeS, 4);
    if (!feed.wantsMapAt(t)) return;
    const corr = setup.analyzer.lastCorrelations();
    if (corr === null) return;
    mapper ??= new EvidenceMapper(setup.geometry, setup.model.pairs, setup.analyzer.sampleRate, setup.speedOfSound, setup.model.maxLag);
    feed.maps(t, mapper.build(corr));
  };
}

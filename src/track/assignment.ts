/**
 * Global nearest neighbour assignment of a hop's candidates to tracks: the one-to-one
 * matching (each track takes at most one candidate, each candidate joins at most one track)
 * with the least total cost, where only gated pairs may match. Solved exactly by dynamic
 * programming over the tracks and the subsets of candidates used so far: tracks x 2^candidates
 * states (16 x 256 at most), buffers sized once.
 *
 * Costs are negative inside the gate (the tracker's: d^2 - gate^2 plus a log-variance term,
 * tracker.ts gate()), so the solution prefers matching as many gated pairs as possible and,
 * among those, the likeliest (common practice, no source).
 */
export class NearestNeighbourAssigner {
  private readonly best: Float64Array;
  private readonly choice: Int8Array;
  private readonly stride: number;

  constructor(
    private readonly maxTracks: number,
    private readonly maxCandidates: number,
  ) {
    this.stride = 1 << maxCandidates;
    this.best = new Float64Array((maxTracks + 1) * this.stride);
    this.choice = new Int8Array((maxTracks + 1) * this.stride);
  }

  /**
   * cost[t * maxCandidates + c]: cost of giving candidate c to the t-th listed track, Infinity
   * when not allowed. Writes the chosen candidate (or -1) of the t-th track to out[t].
   */
  solve(nTracks: number, nCandidates: number, cost: Float64Array, out: Int32Array): void {
    if (nTracks > this.maxTracks || nCandidates > this.maxCandidates) {
      throw new RangeError(`assignment: ${nTracks} tracks x ${nCandidates} candidates exceeds ${this.maxTracks} x ${this.maxCandidates}`);
    }
    const masks = 1 << nCandidates;
    const stride = this.stride;
    const best = this.best;
    const choice = this.choice;
    for (let m = 0; m < masks; m++) best[m] = Infinity;
    best[0] = 0;
    for (let t = 0; t < nTracks; t++) {
      const row = t * stride;
      const next = row + stride;
      for (let m = 0; m < masks; m++) best[next + m] = Infinity;
      for (let m = 0; m < masks; m++) {
        const v = best[row + m]!;
        if (v === Infinity) continue;
        if (v < best[next + m]!) {
          best[next + m] = v;
          choice[next + m] = -1;
        }
        for (let c = 0; c < nCandidates; c++) {
          const bit = 1 << c;
          if ((m & bit) !== 0) continue;
          const k = cost[t * this.maxCandidates + c]!;
          if (k === Infinity) continue;
          const w = v + k;
          if (w < best[next + (m | bit)]!) {
            best[next + (m | bit)] = w;
            choice[next + (m | bit)] = c;
          }
        }
      }
    }
    const last = nTracks * stride;
    let mask = 0;
    for (let m = 1; m < masks; m++) if (best[last + m]! < best[last + mask]!) mask = m;
    for (let t = nTracks; t >= 1; t--) {
      const c = choice[t * stride + mask]!;
      out[t - 1] = c;
      if (c >= 0) mask ^= 1 << c;
    }
  }
}

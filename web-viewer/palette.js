// Colours of the live view. Track colours and band-vote colours are separate families that
// never meet: votes are amber (agrees with the hop), slate grey (another delay) and dark (no
// peak); tracks are saturated hues kept away from amber and from grey (checked in
// test/feed/viewer.test.ts). The evidence of the delay map is drawn in warm white.

export const VOTE_AGREES = '#f2b134';
export const VOTE_OTHER = '#71838c';
export const VOTE_NONE = '#33463e';
export const VOTE_COLOURS = [VOTE_AGREES, VOTE_OTHER, VOTE_NONE];

export const TRACK_COLOURS = ['#e66fb4', '#4fc3b0', '#ef5f57', '#9d84e6', '#8fd14f', '#4aa3f0', '#d35ee8'];
export const UNTRACKED = '#e2ece6';
export const EVIDENCE = [255, 236, 196];

export function trackColour(track) {
  if (track === null || track === undefined || !Number.isFinite(track)) return UNTRACKED;
  const n = TRACK_COLOURS.length;
  return TRACK_COLOURS[((Math.trunc(track) % n) + n) % n];
}

import type { WarningSink } from '../sources/audio-source.js';

/** The default warning sink of the sources: one line on stderr (stdout stays clean for data). */
export const stderrWarning: WarningSink = (message) => {
  process.stderr.write(`bearline: warning: ${message}\n`);
};

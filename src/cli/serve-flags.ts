import type { Command } from 'commander';
import { feedOptionSpecs, resolveFeedOptions, type FeedOptions } from '../feed/feed-options.js';
import { flagOption, type OptionSpec } from '../options/option-spec.js';
import { addOptions, givenFlags, givenOptions, refuseStray } from './options.js';

export const SERVE_SPEC = flagOption('serve', 'serve', false, 'serve the live polar view and its WebSocket feed (see --feed-*)');

/** The feed options, when the command serves the live view. */
export function feedOptionsOf(cmd: Command): FeedOptions {
  return resolveFeedOptions(givenOptions<FeedOptions>(cmd, feedOptionSpecs));
}

/** The feed options with --serve; without it, none (and no --feed-* or other serve-only flag may be given). */
export function resolveServe(cmd: Command, serve: boolean, serveOnly: readonly OptionSpec[]): FeedOptions | null {
  if (serve) return feedOptionsOf(cmd);
  refuseStray(givenFlags(cmd, serveOnly), 'only with --serve; add --serve or drop the option');
  return null;
}

export function addFeedOptions(cmd: Command): Command {
  return addOptions(cmd, feedOptionSpecs);
}

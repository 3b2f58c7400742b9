import type { Command } from 'commander';
import { feedOptionSpecs, resolveFeedOptions, type FeedOptions } from '../feed/feed-options.js';
import type { FeedServer } from '../feed/feed-server.js';
import { flagOption, type OptionSpec } from '../options/option-spec.js';
import type { SessionOutputs } from '../track/tracking-session.js';
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

/** A session's outputs that also send every frame and event to the feed (frames for the feed even when no file wants them). */
export function alsoToFeed(feed: FeedServer, outputs: SessionOutputs): SessionOutputs {
  const { onFrame, onEvent } = outputs;
  return {
    ...outputs,
    onFrame: (rec) => {
      feed.sendFrame(rec);
      return onFrame?.(rec);
    },
    onEvent: (rec) => {
      feed.sendEvent(rec);
      return onEvent?.(rec);
    },
  };
}

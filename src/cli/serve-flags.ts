import { UsageError } from '../util/errors.js';
import { attributeNameOf, feedOptionsFromCli, type FeedOptions } from '../feed/feed-options.js';
import type { FeedServer } from '../feed/feed-server.js';
import type { OptionSpec } from '../options/option-spec.js';
import type { SessionOutputs } from '../track/tracking-session.js';

type Raw = Readonly<Record<string, unknown>>;

/** The flags (e.g. '--feed-port') of the specs the user gave on the command line. */
export function givenFlags(raw: Raw, specs: readonly OptionSpec[], keys?: readonly string[]): string[] {
  return specs.filter((s) => (!keys || keys.includes(s.key)) && raw[attributeNameOf(s.flag)] !== undefined).map((s) => s.flag.split(' ')[0]!);
}

/** A UsageError naming the flags given that do not fit, with what to do about them. */
export function refuseStray(flags: readonly string[], what: string): void {
  if (flags.length > 0) throw new UsageError(`${flags.join(', ')}: ${what}`);
}

/** The feed options with --serve; without it, none (and no --feed-* or other serve-only flag may be given). */
export function resolveServe(serve: boolean | undefined, raw: Raw, serveOnly: readonly OptionSpec[]): FeedOptions | null {
  if (serve) return feedOptionsFromCli(raw);
  refuseStray(givenFlags(raw, serveOnly), 'only with --serve; add --serve or drop the option');
  return null;
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

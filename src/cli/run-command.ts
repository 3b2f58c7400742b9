import { RuntimeFailure, UsageError } from '../util/errors.js';

/** Print a one-line error (no stack trace) and exit with the contract's code. */
export function failAndExit(err: unknown): never {
  if (err instanceof UsageError || err instanceof RuntimeFailure) {
    process.stderr.write(`bearline: ${err.message}\n`);
    process.exit(err.exitCode);
  }
  const message = err instanceof Error ? err.message : String(err);
  process.stderr.write(`bearline: unexpected failure: ${message}\n`);
  if (process.env.BEARLINE_DEBUG && err instanceof Error && err.stack) process.stderr.write(err.stack + '\n');
  process.exit(1);
}

/** Wrap a command action so every error leaves with a clear message and the right exit code. */
export function action<A extends unknown[]>(fn: (...args: A) => Promise<void> | void): (...args: A) => Promise<void> {
  return async (...args: A) => {
    try {
      await fn(...args);
    } catch (err) {
      failAndExit(err);
    }
  };
}

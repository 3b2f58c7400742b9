/**
 * A stop signal for a run that ends by itself (scan of a file or of stdin): the first SIGINT or
 * SIGTERM is noted and `onStop` runs (e.g. to stop reading a stream that may be idle); the run
 * checks `signal` between blocks and finishes as if its input had ended, so the call in progress
 * and every record before it are written. A second signal gives up at once (exit 130 / 143).
 */

export interface StopSignal {
  /** The signal that asked for the stop, or null while none has. */
  readonly signal: NodeJS.Signals | null;
  /** Remove the handlers. */
  dispose(): void;
}

const EXIT_CODE: Record<'SIGINT' | 'SIGTERM', number> = { SIGINT: 130, SIGTERM: 143 };

export function stopOnSignal(onStop: () => void | Promise<void>, signals: NodeJS.EventEmitter = process): StopSignal {
  let got: NodeJS.Signals | null = null;
  const handler = (signal: 'SIGINT' | 'SIGTERM') => (): void => {
    if (got !== null) {
      process.stderr.write(`bearline: ${signal} again: stopping without finishing the records\n`);
      process.exit(EXIT_CODE[signal]);
    }
    got = signal;
    process.stderr.write(`bearline: ${signal}: finishing the call in progress and writing the records\n`);
    void Promise.resolve()
      .then(onStop)
      .catch(() => undefined);
  };
  const onInt = handler('SIGINT');
  const onTerm = handler('SIGTERM');
  signals.on('SIGINT', onInt);
  signals.on('SIGTERM', onTerm);
  return {
    get signal() {
      return got;
    },
    dispose() {
      signals.off('SIGINT', onInt);
      signals.off('SIGTERM', onTerm);
    },
  };
}

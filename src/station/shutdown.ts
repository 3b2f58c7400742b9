/**
 * Orderly stop of a headless run: SIGINT/SIGTERM stop the input, flush and close every sink,
 * then exit 0 (1 if a sink could not close, or the sinks took longer than the close timeout).
 * SIGHUP reopens the log files, so an outside tool can move the old ones away.
 */

export interface StationSink {
  readonly name: string;
  close(): void | Promise<void>;
  reopen?(): void | Promise<void>;
}

export interface ShutdownDeps {
  /** Called first on a stop signal, e.g. to stop reading audio. */
  stopInput?: () => void | Promise<void>;
  /** One line per step (default: stderr). */
  log?: (line: string) => void;
  exit?: (code: number) => void;
  /** Where the signals come from (default: process). */
  signals?: NodeJS.EventEmitter;
  /** Seconds to wait for the sinks (from StationOptions.closeTimeout). */
  closeTimeout?: number;
  /** What was written, for the last line (e.g. '12 events, 1 gap to stdout, log files in DIR'). */
  written?: () => string;
}

export interface ShutdownHandle {
  /** Run the stop sequence now; resolves to the exit code it chose (exit is called with it too). */
  stop(reason: string): Promise<number>;
  /** Remove the signal handlers. */
  dispose(): void;
}

function withTimeout<T>(p: Promise<T>, ms: number): Promise<T | 'timeout'> {
  return new Promise((resolve, reject) => {
    const t = setTimeout(() => resolve('timeout'), ms);
    p.then(
      (v) => {
        clearTimeout(t);
        resolve(v);
      },
      (e: unknown) => {
        clearTimeout(t);
        reject(e);
      },
    );
  });
}

export function installShutdown(sinks: readonly StationSink[], deps: ShutdownDeps = {}): ShutdownHandle {
  const log = deps.log ?? ((line) => process.stderr.write(`bearline: ${line}\n`));
  const exit = deps.exit ?? ((code) => process.exit(code));
  const signals = deps.signals ?? process;
  const timeoutMs = (deps.closeTimeout ?? 10) * 1000;
  let stopping: Promise<number> | null = null;

  async function closeAll(): Promise<number> {
    let code = 0;
    try {
      await deps.stopInput?.();
    } catch (err) {
      log(`stopping the input failed: ${(err as Error).message}`);
      code = 1;
    }
    for (const sink of sinks) {
      try {
        const r = await withTimeout(Promise.resolve().then(() => sink.close()), timeoutMs);
        if (r === 'timeout') {
          log(`closing ${sink.name} took longer than ${timeoutMs / 1000} s; giving up on it`);
          code = 1;
        }
      } catch (err) {
        log(`closing ${sink.name} failed: ${(err as Error).message}`);
        code = 1;
      }
    }
    return code;
  }

  function stop(reason: string): Promise<number> {
    if (stopping) {
      log(`${reason} again: still closing, please wait`);
      return stopping;
    }
    log(`${reason}: closing ${sinks.map((s) => s.name).join(', ') || 'nothing'}`);
    stopping = closeAll().then((code) => {
      const written = deps.written?.();
      log(code === 0 ? `all records written${written ? ` (${written})` : ''}; stopped` : `stopped with errors (see above)${written ? `; records handed on: ${written}` : ''}`);
      exit(code);
      return code;
    });
    return stopping;
  }

  const onInt = (): void => void stop('SIGINT');
  const onTerm = (): void => void stop('SIGTERM');
  const onHup = (): void => {
    void (async () => {
      for (const sink of sinks) {
        if (!sink.reopen) continue;
        try {
          await sink.reopen();
        } catch (err) {
          log(`reopening ${sink.name} failed: ${(err as Error).message}`);
        }
      }
      log('SIGHUP: log files reopened');
    })();
  };
  signals.on('SIGINT', onInt);
  signals.on('SIGTERM', onTerm);
  signals.on('SIGHUP', onHup);

  return {
    stop,
    dispose: () => {
      signals.off('SIGINT', onInt);
      signals.off('SIGTERM', onTerm);
      signals.off('SIGHUP', onHup);
    },
  };
}

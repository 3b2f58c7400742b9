/**
 * A progress bar on stderr for long work, only when stderr is a terminal; stdout stays clean.
 */
export interface Progress {
  update(done: number): void;
  finish(): void;
}

const NONE: Progress = { update() {}, finish() {} };

function clock(s: number): string {
  const m = Math.floor(s / 60);
  const sec = Math.floor(s % 60);
  return m >= 60 ? `${Math.floor(m / 60)}h${String(m % 60).padStart(2, '0')}m` : `${m}:${String(sec).padStart(2, '0')}`;
}

/** "[#####-----]  50%": the share f in [0, 1] as a bar `width` wide and a percentage. */
function bar(f: number, width: number): string {
  const filled = Math.round(f * width);
  return `[${'#'.repeat(filled)}${'-'.repeat(width - filled)}] ${(f * 100).toFixed(0).padStart(3)}%`;
}

/**
 * The bar's common part: at most ten redraws a second (the final one always), each line written
 * over the last, a newline after the final one. `text` makes the line for `done`.
 */
function redrawing(stream: NodeJS.WriteStream, text: (done: number, now: number) => string): Progress {
  let last = 0;
  let lastDone = 0;
  const draw = (done: number, final: boolean): void => {
    const now = Date.now();
    if (!final && now - last < 100) return;
    last = now;
    stream.write(`\r${text(done, now)}\x1b[K`);
    if (final) stream.write('\n');
  };
  return {
    update(done) {
      lastDone = done;
      draw(done, false);
    },
    finish() {
      draw(lastDone, true);
    },
  };
}

/** `total` and `done` count sample frames; `rate` turns them into stream time. */
export function createProgress(label: string, total: number | null, rate: number, stream: NodeJS.WriteStream = process.stderr): Progress {
  if (!stream.isTTY) return NONE;
  const started = Date.now();
  return redrawing(stream, (done, now) => {
    const streamS = done / rate;
    const wall = Math.max(1e-3, (now - started) / 1000);
    const speed = `${(streamS / wall).toFixed(0)}x real time`;
    const width = Math.max(10, Math.min(40, (stream.columns ?? 80) - 60));
    if (!(total && total > 0)) return `${label} ${clock(streamS)} analysed, ${speed}`;
    return `${label} ${bar(Math.min(1, done / total), width)} ${clock(streamS)} of ${clock(total / rate)}, ${speed}`;
  });
}

/** A progress bar over bytes read (files whose length is known), on stderr when it is a terminal. */
export function createByteProgress(label: string, totalBytes: number, stream: NodeJS.WriteStream = process.stderr): Progress {
  if (!stream.isTTY || totalBytes <= 0) return NONE;
  return redrawing(stream, (done) => {
    const width = Math.max(10, Math.min(40, (stream.columns ?? 80) - 40));
    return `${label} ${bar(Math.min(1, done / totalBytes), width)}`;
  });
}

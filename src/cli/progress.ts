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

/** `total` and `done` count sample frames; `rate` turns them into stream time. */
export function createProgress(label: string, total: number | null, rate: number, stream: NodeJS.WriteStream = process.stderr): Progress {
  if (!stream.isTTY) return NONE;
  const started = Date.now();
  let last = 0;
  const draw = (done: number, final: boolean) => {
    const now = Date.now();
    if (!final && now - last < 100) return;
    last = now;
    const streamS = done / rate;
    const wall = Math.max(1e-3, (now - started) / 1000);
    const speed = `${(streamS / wall).toFixed(0)}x real time`;
    const width = Math.max(10, Math.min(40, (stream.columns ?? 80) - 60));
    let text: string;
    if (total && total > 0) {
      const f = Math.min(1, done / total);
      const filled = Math.round(f * width);
      text = `${label} [${'#'.repeat(filled)}${'-'.repeat(width - filled)}] ${(f * 100).toFixed(0).padStart(3)}% ${clock(streamS)} of ${clock(total / rate)}, ${speed}`;
    } else {
      text = `${label} ${clock(streamS)} analysed, ${speed}`;
    }
    stream.write(`\r${text}\x1b[K`);
    if (final) stream.write('\n');
  };
  let lastDone = 0;
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

/** A progress bar over bytes read (files whose length is known), on stderr when it is a terminal. */
export function createByteProgress(label: string, totalBytes: number, stream: NodeJS.WriteStream = process.stderr): Progress {
  if (!stream.isTTY || totalBytes <= 0) return NONE;
  let last = 0;
  let lastDone = 0;
  const draw = (done: number, final: boolean): void => {
    const now = Date.now();
    if (!final && now - last < 100) return;
    last = now;
    const f = Math.min(1, done / totalBytes);
    const width = Math.max(10, Math.min(40, (stream.columns ?? 80) - 40));
    const filled = Math.round(f * width);
    stream.write(`\r${label} [${'#'.repeat(filled)}${'-'.repeat(width - filled)}] ${(f * 100).toFixed(0).padStart(3)}%\x1b[K`);
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

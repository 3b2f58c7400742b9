/**
 * A one-line progress bar on stderr, drawn only when stderr is a terminal (stdout stays
 * clean for data). Redraws at most every 1 % step.
 */
export interface ProgressBar {
  update(done: number): void;
  finish(): void;
}

export function progressBar(label: string, stream: NodeJS.WriteStream = process.stderr): ProgressBar {
  if (!stream.isTTY) return { update: () => undefined, finish: () => undefined };
  let last = -1;
  const width = 30;
  const draw = (done: number): void => {
    const pct = Math.max(0, Math.min(100, Math.floor(done * 100)));
    if (pct === last) return;
    last = pct;
    const fill = Math.round((pct / 100) * width);
    stream.write(`\r${label} [${'#'.repeat(fill)}${'.'.repeat(width - fill)}] ${String(pct).padStart(3)}%`);
  };
  return {
    update: draw,
    finish: () => {
      draw(1);
      stream.write('\n');
    },
  };
}

/** The default warning sink: one line on stderr (stdout stays clean for data). */
export function stderrWarning(message: string): void {
  process.stderr.write(`bearline: warning: ${message}\n`);
}

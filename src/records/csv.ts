/**
 * CSV for records: a column is a header name and how to read its value from a record. Cells
 * are plain numbers or text; text holding a comma, a quote or a newline is quoted (RFC 4180).
 */
export interface CsvColumn<T> {
  readonly name: string;
  readonly get: (rec: T) => number | string | boolean | null | undefined;
}

export function csvCell(v: number | string | boolean | null | undefined): string {
  if (v === null || v === undefined) return '';
  if (typeof v === 'string') return /[",\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v;
  return String(v);
}

export function csvHeader<T>(columns: readonly CsvColumn<T>[]): string {
  return columns.map((c) => c.name).join(',');
}

export function csvRow<T>(columns: readonly CsvColumn<T>[], rec: T): string {
  return columns.map((c) => csvCell(c.get(rec))).join(',');
}

/** Number of fields in a CSV line, honouring double-quoted fields; -1 for an open quote. */
export function csvFieldCount(line: string): number {
  let n = 1;
  let quoted = false;
  for (let i = 0; i < line.length; i++) {
    const ch = line[i];
    if (ch === '"') quoted = !quoted;
    else if (ch === ',' && !quoted) n++;
  }
  return quoted ? -1 : n;
}

/** The fields of one CSV line (RFC 4180 quoting); null for a line that ends inside a quote. */
export function csvSplit(line: string): string[] | null {
  if (!line.includes('"')) return line.split(',');
  const out: string[] = [];
  let cell = '';
  let quoted = false;
  for (let i = 0; i < line.length; i++) {
    const ch = line[i];
    if (quoted) {
      if (ch === '"' && line[i + 1] === '"') {
        cell += '"';
        i++;
      } else if (ch === '"') quoted = false;
      else cell += ch;
    } else if (ch === '"') quoted = true;
    else if (ch === ',') {
      out.push(cell);
      cell = '';
    } else cell += ch;
  }
  if (quoted) return null;
  out.push(cell);
  return out;
}

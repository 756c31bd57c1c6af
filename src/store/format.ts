/**
 * Plain-text renderings of query results: an aligned table for terminals and
 * CSV (RFC 4180) for spreadsheets and scripts.
 *
 * Numbers are written with JavaScript's shortest round-trip form (String(x)),
 * so a CSV value parses back to the identical double; ±Infinity are written as
 * "Infinity" / "-Infinity". NULL is an empty CSV field and "NULL" in the table.
 */

/** Text of one cell value (NULL/undefined as `nullText`). */
export function formatValue(value: unknown, nullText: string): string {
  if (value === null || value === undefined) return nullText;
  if (typeof value === 'string') return value;
  if (typeof value === 'number' || typeof value === 'bigint' || typeof value === 'boolean') return String(value);
  if (value instanceof Uint8Array) return `x'${Buffer.from(value).toString('hex')}'`;
  return JSON.stringify(value) ?? String(value);
}

/**
 * Aligned plain-text table: header, a dashed rule, one line per row.
 * Numeric columns (every non-null value a number) are right-aligned, others left-aligned.
 * Line breaks and tabs inside values are shown as \n, \r and \t so each row stays on one line.
 */
export function formatTable(columns: readonly string[], rows: readonly Record<string, unknown>[]): string {
  const cells = rows.map((row) =>
    columns.map((column) => formatValue(row[column], 'NULL').replace(/\r/g, '\\r').replace(/\n/g, '\\n').replace(/\t/g, '\\t')),
  );
  const widths = columns.map((column, c) => cells.reduce((width, line) => Math.max(width, (line[c] as string).length), column.length));
  const numeric = columns.map(
    (column) =>
      rows.length > 0 &&
      rows.every((row) => row[column] === null || row[column] === undefined || typeof row[column] === 'number' || typeof row[column] === 'bigint'),
  );
  const pad = (text: string, c: number): string =>
    numeric[c] === true ? text.padStart(widths[c] as number) : text.padEnd(widths[c] as number);
  const lines: string[] = [];
  lines.push(columns.map((column, c) => pad(column, c)).join('  ').trimEnd());
  lines.push(widths.map((width) => '-'.repeat(width)).join('  '));
  for (const line of cells) lines.push(line.map((text, c) => pad(text, c)).join('  ').trimEnd());
  return lines.join('\n') + '\n';
}

/** One CSV field, quoted when it holds a comma, a double quote, CR or LF (RFC 4180, section 2). */
export function csvField(text: string): string {
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/** CSV with a header line; records end with CRLF as RFC 4180 prescribes. */
export function toCsv(columns: readonly string[], rows: readonly Record<string, unknown>[]): string {
  const lines = [columns.map(csvField).join(',')];
  for (const row of rows) lines.push(columns.map((column) => csvField(formatValue(row[column], ''))).join(','));
  return lines.map((line) => line + '\r\n').join('');
}

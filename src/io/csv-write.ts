/** CSV writing (RFC 4180: comma-separated, CRLF-free LF lines, quotes doubled). */

/** A cell value as written: numbers as given, null/undefined as empty. */
export type CsvValue = string | number | boolean | null | undefined;

/** Quotes a field when it holds a comma, quote or line break (RFC 4180 §2.6–2.7). */
export function csvField(value: CsvValue): string {
  if (value === null || value === undefined) return '';
  if (typeof value === 'number') return Number.isFinite(value) ? String(value) : '';
  const text = String(value);
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/** Header plus rows as one CSV text ending in a newline. */
export function toCsv(header: readonly string[], rows: readonly (readonly CsvValue[])[]): string {
  const lines = [header.map(csvField).join(',')];
  for (const row of rows) lines.push(row.map(csvField).join(','));
  return lines.join('\n') + '\n';
}

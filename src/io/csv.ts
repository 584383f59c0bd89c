/**
 * CSV text → records, following RFC 4180: fields separated by a delimiter,
 * records by CRLF (LF and lone CR are accepted too), fields optionally enclosed
 * in double quotes, a quote inside a quoted field written twice, and quoted
 * fields that may hold delimiters and line breaks. Spaces belong to the field.
 *
 * The parser only splits text; it gives no meaning to any column.
 */

/** Field delimiters pondage accepts. */
export type CsvDelimiter = ',' | ';';

/** One record and the 1-based line of the file where it starts. */
export interface CsvRecord {
  fields: string[];
  line: number;
}

/** Malformed CSV: what, and the 1-based line where it happens. */
export class CsvSyntaxError extends Error {
  override readonly name = 'CsvSyntaxError';
  constructor(
    message: string,
    /** 1-based line of the problem. */
    readonly line: number,
  ) {
    super(message);
  }
}

/** Removes a leading UTF-8 byte-order mark, which spreadsheet exports often write. */
export function stripBom(text: string): string {
  return text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
}

/**
 * Picks the delimiter from the first record: semicolon when it holds more
 * unquoted semicolons than unquoted commas, else comma.
 */
export function detectDelimiter(text: string): CsvDelimiter {
  let commas = 0;
  let semicolons = 0;
  let quoted = false;
  for (let i = 0; i < text.length; i++) {
    const ch = text[i];
    if (ch === '"') quoted = !quoted;
    else if (!quoted && (ch === '\n' || ch === '\r')) break;
    else if (!quoted && ch === ',') commas++;
    else if (!quoted && ch === ';') semicolons++;
  }
  return semicolons > commas ? ';' : ',';
}

/**
 * Splits CSV text into records. A trailing line break does not make an empty
 * record; a blank line inside the file gives a record with one empty field.
 * Throws CsvSyntaxError for text after a closing quote or an unclosed quote.
 */
export function parseCsv(text: string, delimiter: CsvDelimiter): CsvRecord[] {
  const src = stripBom(text);
  const records: CsvRecord[] = [];
  let fields: string[] = [];
  let field = '';
  let line = 1;
  let recordLine = 1;
  let i = 0;
  const n = src.length;
  const endRecord = (): void => {
    fields.push(field);
    records.push({ fields, line: recordLine });
    fields = [];
    field = '';
  };
  while (i < n) {
    const ch = src[i];
    if (ch === '"' && field === '') {
      // Quoted field: runs to the next quote that is not doubled.
      const openLine = line;
      i++;
      let closed = false;
      while (i < n) {
        const q = src[i];
        if (q === '"') {
          if (src[i + 1] === '"') {
            field += '"';
            i += 2;
            continue;
          }
          closed = true;
          i++;
          break;
        }
        if (q === '\n' || (q === '\r' && src[i + 1] !== '\n')) line++;
        field += q;
        i++;
      }
      if (!closed) {
        throw new CsvSyntaxError(`quoted field opened on line ${openLine} is never closed; close it with a double quote (")`, openLine);
      }
      const next = src[i];
      if (next !== undefined && next !== delimiter && next !== '\n' && next !== '\r') {
        throw new CsvSyntaxError(
          `text after a closing quote on line ${line}; inside a quoted field write a quote as two quotes ("")`,
          line,
        );
      }
      continue;
    }
    if (ch === delimiter) {
      fields.push(field);
      field = '';
      i++;
      continue;
    }
    if (ch === '\r' || ch === '\n') {
      endRecord();
      i += ch === '\r' && src[i + 1] === '\n' ? 2 : 1;
      line++;
      recordLine = line;
      continue;
    }
    field += ch;
    i++;
  }
  if (field !== '' || fields.length > 0) endRecord();
  return records;
}

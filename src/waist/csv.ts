/**
 * The waist's CSV dialect: RFC 4180 with a header row, `\n` line ends, fields quoted only when they
 * hold a comma, a quote or a line break. Waist tables are small (states² × periods), so they are
 * read whole. Cells are never neutralised for spreadsheets here: a waist is data for tidemark, and its
 * text cells (state names, period labels, segment values) must come back exactly as written.
 */
import { TidemarkError, showValue } from '../errors.js';

/** One field, quoted when it must be. */
export function waistField(v: string | number): string {
  const s = String(v);
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** A header and rows as CSV text, ending in a newline. */
export function waistCsv(header: readonly string[], rows: readonly (readonly (string | number)[])[]): string {
  let out = `${header.join(',')}\n`;
  for (const r of rows) out += `${r.map(waistField).join(',')}\n`;
  return out;
}

export interface CsvRecord {
  /** 1-based physical line where the record starts. */
  line: number;
  fields: string[];
}

/**
 * Parse CSV text into records (header included as the first). A quote inside an unquoted field, or
 * an unclosed quote, is an error naming the line.
 * @throws {TidemarkError} INPUT_INVALID
 * @example parseWaistCsv('a,b\n1,"x,y"\n') // [{ line: 1, fields: ['a', 'b'] }, { line: 2, fields: ['1', 'x,y'] }]
 */
export function parseWaistCsv(text: string, file: string): CsvRecord[] {
  const out: CsvRecord[] = [];
  let i = 0;
  let line = 1;
  const n = text.length;
  if (text.charCodeAt(0) === 0xfeff) i = 1;
  while (i < n) {
    const start = line;
    const fields: string[] = [];
    for (;;) {
      let value = '';
      if (text[i] === '"') {
        i++;
        for (;;) {
          if (i >= n) throw new TidemarkError('INPUT_INVALID', 'unclosed quote', { file, line: start }, 'Close the quoted field');
          const c = text[i];
          if (c === '"') {
            if (text[i + 1] === '"') {
              value += '"';
              i += 2;
              continue;
            }
            i++;
            break;
          }
          if (c === '\n') line++;
          value += c;
          i++;
        }
        if (i < n && text[i] !== ',' && text[i] !== '\n' && text[i] !== '\r') {
          throw new TidemarkError('INPUT_INVALID', `text after a closing quote: '${showValue(text.slice(i, i + 20))}'`, { file, line }, 'Quote the whole field');
        }
      } else {
        let j = i;
        while (j < n && text[j] !== ',' && text[j] !== '\n' && text[j] !== '\r') j++;
        value = text.slice(i, j);
        if (value.includes('"')) throw new TidemarkError('INPUT_INVALID', `a quote inside an unquoted field: '${showValue(value)}'`, { file, line }, 'Quote the field and double the quote');
        i = j;
      }
      fields.push(value);
      if (i < n && text[i] === ',') {
        i++;
        continue;
      }
      break;
    }
    if (text[i] === '\r') i++;
    if (i < n && text[i] === '\n') {
      i++;
      line++;
    }
    if (fields.length === 1 && fields[0] === '') continue; // blank line
    out.push({ line: start, fields });
  }
  return out;
}

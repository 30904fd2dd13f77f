/**
 * Parser for a durations CSV: one row per user (or per group of users), header required.
 *
 * Columns (names case-insensitive, any order):
 *   duration  — periods from first active to first dormant or to the end of the data, a number ≥ 0
 *   observed  — 1 when the ending was seen, 0 when the row is right-censored
 *   group     — optional group label ('' when absent)
 *   users     — optional number of users the row stands for (default 1), a number ≥ 0
 * Other columns are ignored, except a name within a small edit distance of a known one, which is
 * taken for a typo and rejected with a suggestion. Fields may be double-quoted ("" inside quotes is a
 * quote); a quoted field cannot span lines. Blank lines are skipped; a UTF-8 BOM and CRLF are accepted.
 * Rows with the same (group, duration, observed) are added together; the result is sorted by group in
 * order of first appearance, then duration, then observed.
 */
import { TidemarkError, didYouMean } from '../errors.js';
import type { DurationRow } from '../flows/types.js';

const REQUIRED = ['duration', 'observed'] as const;
const KNOWN = ['duration', 'observed', 'group', 'users'];

/** Splits one CSV line into fields; returns null for an unterminated quote. */
function splitLine(line: string): string[] | null {
  const fields: string[] = [];
  let i = 0;
  for (;;) {
    let field = '';
    if (line[i] === '"') {
      i++;
      for (;;) {
        if (i >= line.length) return null;
        if (line[i] === '"') {
          if (line[i + 1] === '"') {
            field += '"';
            i += 2;
          } else {
            i++;
            break;
          }
        } else field += line[i++];
      }
      while (i < line.length && line[i] !== ',') field += line[i++];
    } else {
      while (i < line.length && line[i] !== ',') field += line[i++];
    }
    fields.push(field.trim());
    if (i >= line.length) return fields;
    i++; // the comma
  }
}

/**
 * Parses durations CSV text into aggregated {@link DurationRow}s.
 *
 * @param text the file's content
 * @param file the file name used in error locations
 * @throws {TidemarkError} INPUT_INVALID with {file, line, column} for a missing header or column, an
 *   unterminated quote, a wrong number of fields, or a bad value; NOT_ENOUGH_DATA (with {file}) when
 *   the file has a header but no data rows.
 * @example parseDurationsCsv('duration,observed\n3,1\n3,1\n5,0\n') // [{ group: '', duration: 3, observed: 1, users: 2 }, { group: '', duration: 5, observed: 0, users: 1 }]
 */
export function parseDurationsCsv(text: string, file = '<input>'): DurationRow[] {
  const lines = text.replace(/^\uFEFF/, '').split(/\r?\n/);
  const headerAt = lines.findIndex((l) => l.trim() !== '');
  if (headerAt < 0) throw new TidemarkError('INPUT_INVALID', 'the file is empty; a header line is required', { file, line: 1 }, 'start with a header such as duration,observed,group');
  const header = splitLine(lines[headerAt]);
  if (!header) throw new TidemarkError('INPUT_INVALID', 'unterminated quote in the header', { file, line: headerAt + 1 });
  const names = header.map((h) => h.toLowerCase());
  names.forEach((name, i) => {
    if (KNOWN.includes(name)) {
      if (names.indexOf(name) !== i) throw new TidemarkError('INPUT_INVALID', `column '${name}' appears twice`, { file, line: headerAt + 1, column: name });
      return;
    }
    const near = didYouMean(name, KNOWN);
    if (near && !names.includes(near) && name.length > 2) {
      throw new TidemarkError('INPUT_INVALID', `unknown column '${header[i]}'`, { file, line: headerAt + 1, column: header[i] }, `did you mean '${near}'?`);
    }
  });
  for (const required of REQUIRED) {
    if (!names.includes(required)) {
      throw new TidemarkError('INPUT_INVALID', `missing column '${required}'`, { file, line: headerAt + 1, column: required }, 'the header needs duration and observed (group and users are optional)');
    }
  }
  const at = (name: string): number => names.indexOf(name);
  const col = { duration: at('duration'), observed: at('observed'), group: at('group'), users: at('users') };

  const merged = new Map<string, DurationRow>();
  const groupOrder = new Map<string, number>();
  for (let li = headerAt + 1; li < lines.length; li++) {
    if (lines[li].trim() === '') continue;
    const line = li + 1;
    const fields = splitLine(lines[li]);
    if (!fields) throw new TidemarkError('INPUT_INVALID', 'unterminated quote', { file, line });
    if (fields.length !== header.length) {
      throw new TidemarkError('INPUT_INVALID', `expected ${header.length} fields as in the header, got ${fields.length}`, { file, line });
    }
    const number = (name: 'duration' | 'users', raw: string): number => {
      const v = raw === '' ? NaN : Number(raw);
      if (!(Number.isFinite(v) && v >= 0)) throw new TidemarkError('INPUT_INVALID', `${name} must be a number ≥ 0, got '${raw}'`, { file, line, column: name });
      return v;
    };
    const duration = number('duration', fields[col.duration]);
    const rawObserved = fields[col.observed];
    if (rawObserved !== '0' && rawObserved !== '1') {
      throw new TidemarkError('INPUT_INVALID', `observed must be 1 (ended) or 0 (censored), got '${rawObserved}'`, { file, line, column: 'observed' });
    }
    const observed = rawObserved === '1' ? 1 : 0;
    const group = col.group >= 0 ? fields[col.group] : '';
    const users = col.users >= 0 ? number('users', fields[col.users]) : 1;
    if (!groupOrder.has(group)) groupOrder.set(group, groupOrder.size);
    const key = JSON.stringify([group, duration, observed]);
    const row = merged.get(key);
    if (row) row.users += users;
    else merged.set(key, { group, duration, observed, users });
  }
  if (merged.size === 0) throw new TidemarkError('NOT_ENOUGH_DATA', 'the file has a header but no data rows', { file });
  return [...merged.values()].sort(
    (a, b) => groupOrder.get(a.group)! - groupOrder.get(b.group)! || a.duration - b.duration || a.observed - b.observed,
  );
}

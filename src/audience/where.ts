/**
 * `--where COL=VALUE` filters on an attribute's value. Several on the same column keep users holding
 * any of the values; on different columns, users matching every column. A value is matched exactly as
 * written (case and spaces count). An empty VALUE (`plan=`) matches users with no value in the column.
 */
import { TidemarkError, showValue, suggestion } from '../errors.js';

/** One column's accepted values ('' stands for "no value"). */
export interface WhereClause {
  column: string;
  values: string[];
}

/**
 * Parse `COL=VALUE` texts (split at the first `=`), grouped by column in the order first given.
 * @throws TidemarkError INPUT_INVALID (key `where`) for a text with no `=` or an empty column name.
 * @example parseWhere(['plan=pro', 'plan=studio', 'channel=']) // [{ column: 'plan', values: ['pro', 'studio'] }, { column: 'channel', values: [''] }]
 */
export function parseWhere(texts: readonly string[]): WhereClause[] {
  const out: WhereClause[] = [];
  for (const t of texts) {
    const at = t.indexOf('=');
    if (at <= 0) {
      throw new TidemarkError('INPUT_INVALID', at === 0 ? `'${showValue(t, 40)}' names no column` : `'${showValue(t, 40)}' is not COLUMN=VALUE`, { key: 'where' }, 'For example --where plan=studio (an empty value, plan=, keeps users with no value)');
    }
    const column = t.slice(0, at);
    const value = t.slice(at + 1);
    const clause = out.find((c) => c.column === column);
    if (!clause) out.push({ column, values: [value] });
    else if (!clause.values.includes(value)) clause.values.push(value);
  }
  return out;
}

/**
 * The index in `columns` of each clause's column.
 * @throws TidemarkError INPUT_INVALID (key `where`) naming a column the events lack, with "did you mean".
 */
export function whereColumns(clauses: readonly WhereClause[], columns: readonly string[]): number[] {
  return clauses.map((c) => {
    const i = columns.indexOf(c.column);
    if (i < 0) {
      throw new TidemarkError('INPUT_INVALID', `the events have no column '${showValue(c.column, 40)}'`, { key: 'where' },
        suggestion(c.column, columns) ?? (columns.length ? `Columns: ${columns.map((n) => showValue(n, 40)).join(', ')}` : 'The events have no columns beside the user, time and event'));
    }
    return i;
  });
}

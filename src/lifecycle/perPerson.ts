/**
 * Per-person columns: attribute columns whose values are nearly unique per user (an email address, a
 * phone number, a customer number). Splitting a report by such a column would publish one value per
 * person, so `--by` refuses it unless forced, and sentences never name its values.
 *
 * The measure: among the users who have a value in the column, the share who hold a value that no
 * other user holds. A column is per-person when that share is above {@link PER_PERSON_SHARE} and at
 * least {@link PER_PERSON_MIN_USERS} users have a value (below that, even a plan column gives most
 * users a value of their own by chance). One linear pass over the rows; no sort, no per-user strings.
 */
import { TidemarkError, showValue, suggestion } from '../errors.js';
import type { EventLog } from '../ingest/eventLog.js';

/** A column is per-person when more than this share of its users hold a value of their own. */
export const PER_PERSON_SHARE = 0.5;
/** …and at least this many users have a value in it. */
export const PER_PERSON_MIN_USERS = 20;
/** The command-line flag that allows splitting by a per-person column. */
export const PER_PERSON_FLAG = '--publish-per-person-values';

export interface ColumnUniqueness {
  column: string;
  /** Users with at least one non-empty value in the column. */
  usersWithValue: number;
  /** Users holding at least one value that no other user holds. */
  usersWithOwnValue: number;
  /** usersWithOwnValue / usersWithValue; null when no user has a value. */
  share: number | null;
  /** share > PER_PERSON_SHARE and usersWithValue ≥ PER_PERSON_MIN_USERS. */
  perPerson: boolean;
}

/**
 * How nearly unique the values of attribute column `column` are per user.
 *
 * Definition: a value is a user's own when every row holding it belongs to that user; `share` is the
 * number of users holding an own value over the number of users holding any non-empty value.
 * Source: our own rule (a uniqueness screen in the spirit of k-anonymity with k = 2: a value held by
 * one user singles that user out).
 * @throws TidemarkError INPUT_INVALID when the log has no such column (with "did you mean").
 * @example 40 users with an email each and a shared plan: columnUniqueness(log, 'email').share === 1,
 *   perPerson true; columnUniqueness(log, 'plan').share === 0, perPerson false.
 */
export function columnUniqueness(log: EventLog, column: string): ColumnUniqueness {
  const col = log.attributes.find((a) => a.name === column);
  if (!col) throw noSplitColumn(column, log.attributes.map((a) => a.name));
  // owner[v]: the one user seen with value v so far, -1 none yet, -2 two or more users
  const owner = new Int32Array(col.values.length).fill(-1);
  const hasValue = new Uint8Array(log.users.length);
  for (let e = 0; e < log.size; e++) {
    const v = col.codes[e];
    if (v === 0) continue; // code 0 is "no value"
    const u = log.user[e];
    hasValue[u] = 1;
    const o = owner[v];
    if (o === -1) owner[v] = u;
    else if (o !== u) owner[v] = -2;
  }
  const own = new Uint8Array(log.users.length);
  for (let v = 1; v < owner.length; v++) if (owner[v] >= 0) own[owner[v]] = 1;
  let usersWithValue = 0, usersWithOwnValue = 0;
  for (let u = 0; u < hasValue.length; u++) {
    usersWithValue += hasValue[u];
    usersWithOwnValue += own[u];
  }
  return uniquenessOf(column, usersWithValue, usersWithOwnValue);
}

/** The measure from its two counts (an engine that counts them elsewhere, in SQL say, shares the rule). */
export function uniquenessOf(column: string, usersWithValue: number, usersWithOwnValue: number): ColumnUniqueness {
  const share = usersWithValue === 0 ? null : usersWithOwnValue / usersWithValue;
  return { column, usersWithValue, usersWithOwnValue, share, perPerson: share !== null && share > PER_PERSON_SHARE && usersWithValue >= PER_PERSON_MIN_USERS };
}

/** The refusal of a `--by` column the events lack, with "did you mean" or the columns there are. */
export function noSplitColumn(column: string, names: readonly string[]): TidemarkError {
  return new TidemarkError('INPUT_INVALID', `the events have no column '${showValue(column, 40)}' to split by`, { key: 'by' },
    suggestion(column, names) ?? (names.length ? `Columns you can split by: ${names.map((n) => showValue(n, 40)).join(', ')}` : 'The events have no extra columns'));
}

/** Every attribute column of the log with its uniqueness, per-person ones first (for a data check). */
export function perPersonColumns(log: EventLog): ColumnUniqueness[] {
  return log.attributes.map((a) => columnUniqueness(log, a.name)).sort((a, b) => Number(b.perPerson) - Number(a.perPerson));
}

/**
 * Check a column asked for with `--by`: refuse a per-person column unless `allow` is true.
 * @throws TidemarkError INPUT_INVALID for an unknown column, or a per-person one when not allowed,
 *   naming the column, the share and the flag that forces it.
 */
export function checkSplitColumn(log: EventLog, column: string, allow = false): ColumnUniqueness {
  return checkUniqueness(columnUniqueness(log, column), allow);
}

/**
 * Refuse a per-person column unless `allow` (the check of {@link checkSplitColumn}, on counts made anywhere).
 * @throws TidemarkError INPUT_INVALID as checkSplitColumn.
 */
export function checkUniqueness(u: ColumnUniqueness, allow = false): ColumnUniqueness {
  const column = u.column;
  if (u.perPerson && !allow) {
    throw new TidemarkError('INPUT_INVALID',
      `column '${showValue(column, 40)}' looks like a per-person column: ${u.usersWithOwnValue.toLocaleString('en-US')} of ${u.usersWithValue.toLocaleString('en-US')} users (${Math.round(u.share! * 100)}%) hold a value no other user holds, so splitting by it would publish one value per person`,
      { column },
      `Split by a column that groups users (plan, region), or pass ${PER_PERSON_FLAG} to split by it anyway`);
  }
  return u;
}

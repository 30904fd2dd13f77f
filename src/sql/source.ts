/**
 * An events table (or view, or query) as the compiler's tm_src, in any dialect. The columns are the
 * rules' (user, timestamp, event) and the attributes; how the timestamp is read follows its kind:
 * - text: parsed as the memory engine parses text (ISO 8601 with or without an offset, epoch digits);
 * - instant: a timestamp with a time zone (an instant), put into the rules' zone;
 * - local: a timestamp without a time zone (or a date), already local time in the rules' zone;
 * - number: epoch seconds or milliseconds, by magnitude.
 */
import { TidemarkError } from '../errors.js';
import { headerPlan } from '../ingest/header.js';
import { noSplitColumn } from '../lifecycle/perPerson.js';
import type { Rules } from '../rules/schema.js';
import type { SqlSource } from './compile.js';
import type { Dialect } from './dialects.js';

export const TIMESTAMP_KINDS = ['text', 'instant', 'local', 'number'] as const;
export type ColumnKind = (typeof TIMESTAMP_KINDS)[number];

export interface TypedColumn {
  name: string;
  kind: ColumnKind;
}

/**
 * The source relation of a table's columns.
 * @param relation a table name (quoted as needed) or a parenthesised query with an alias
 * @param place where the table lives, for messages
 * @throws TidemarkError EVENTS_FORMAT when a mapped column is missing (as the CSV reader says it),
 *   INPUT_INVALID for a --by column the table lacks
 */
export function tableSource(D: Dialect, relation: string, columns: readonly TypedColumn[], rules: Rules, by: string | undefined, place: string): SqlSource {
  const plan = headerPlan(columns.map((c) => c.name), rules.columns, rules.activity.keyEvents !== undefined, place);
  const ref = (j: number) => D.ident(columns[j].name);
  const text = (j: number) => `CAST(${ref(j)} AS ${D.text})`;
  const ts = ref(plan.timestamp);
  const nul = (t: string) => `CAST(NULL AS ${t})`;
  const kind = columns[plan.timestamp].kind;
  const tsCols = [
    `${kind === 'text' ? text(plan.timestamp) : nul(D.text)} AS ts_text`,
    `${kind === 'number' ? `CAST(${ts} AS ${D.double})` : nul(D.double)} AS ts_num`,
    `${kind === 'instant' ? D.msOfInstant(ts) : nul(D.bigint)} AS ts_instant`,
    `${kind === 'local' ? D.msOfLocal(ts) : nul(D.bigint)} AS ts_local`,
  ];
  const attributes = plan.attributeNames;
  const byIndex = by === undefined ? -1 : attributes.indexOf(by);
  if (by !== undefined && byIndex < 0) throw noSplitColumn(by, attributes);
  const attr = (k: number) => `coalesce(${text(plan.attributePositions[k])}, '')`;
  const items = [
    `${text(plan.user)} AS user_id`,
    ...tsCols,
    `${plan.event >= 0 ? text(plan.event) : nul(D.text)} AS event`,
    ...attributes.map((_, k) => `${attr(k)} AS attr_${k}`),
    ...(byIndex >= 0 ? [`${attr(byIndex)} AS by_value`] : []),
  ];
  return {
    select: `SELECT ${items.join(',\n  ')}\nFROM ${relation}`,
    has: { tsText: kind === 'text', tsNum: kind === 'number', tsInstant: kind === 'instant', tsLocal: kind === 'local', preReason: false, event: plan.event >= 0, by: byIndex >= 0 },
    attributes,
  };
}

/** A DuckDB or PostgreSQL type name as a timestamp kind. */
export function kindOfType(type: string): ColumnKind {
  const t = type.toUpperCase();
  if (/^TIMESTAMP(TZ| WITH TIME ZONE)/.test(t) || t === 'TIMESTAMPTZ') return 'instant';
  if (t.startsWith('TIMESTAMP') || t === 'DATE') return 'local';
  if (/^(TINYINT|SMALLINT|INTEGER|INT|BIGINT|HUGEINT|UTINYINT|USMALLINT|UINTEGER|UBIGINT|UHUGEINT|FLOAT|REAL|DOUBLE|DECIMAL|NUMERIC)/.test(t)) return 'number';
  return 'text';
}

/** A relation name `a.b` with each part quoted. */
export function qualified(D: Dialect, name: string): string {
  if (name.trim() === '') throw new TidemarkError('USAGE', 'the table name is empty', { key: 'table' }, 'Give a table or view name, e.g. events or analytics.events');
  return name.split('.').map((p) => D.ident(p)).join('.');
}

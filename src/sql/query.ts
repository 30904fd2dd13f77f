/**
 * Queries as named common table expressions. Each concept of the compiler is one CTE (`tm_…`); a
 * query is the CTEs it needs, in order, then its final SELECT. An engine that runs several queries
 * on one connection may store some CTEs as tables first and leave them out of the WITH.
 */

export interface Cte {
  name: string;
  sql: string;
  /** One line: what a row of it is. */
  comment: string;
}

const NAME = /\btm_[a-z0-9_]+\b/g;

/** The CTE names a piece of SQL refers to. */
function refs(sql: string): Set<string> {
  return new Set(sql.match(NAME) ?? []);
}

/**
 * The query `final` with the CTEs it needs (transitively), in the order given, each with its
 * comment; CTEs in `stored` are taken as existing tables and left out.
 */
export function withCtes(ctes: readonly Cte[], final: string, stored: ReadonlySet<string> = new Set()): string {
  const byName = new Map(ctes.map((c) => [c.name, c]));
  const need = new Set<string>();
  const visit = (sql: string) => {
    for (const r of refs(sql)) {
      if (need.has(r) || stored.has(r) || !byName.has(r)) continue;
      need.add(r);
      visit(byName.get(r)!.sql);
    }
  };
  visit(final);
  const used = ctes.filter((c) => need.has(c.name));
  if (used.length === 0) return `${final}\n`;
  return `WITH\n${used.map((c) => `-- ${c.comment}\n${c.name} AS (\n${indent(c.sql)}\n)`).join(',\n')}\n${final}\n`;
}

function indent(s: string): string {
  return s.split('\n').map((l) => `  ${l}`).join('\n');
}

/**
 * `tidemark sql`: the rules compiled for a warehouse, as files an analyst runs there. One query a
 * waist table, a query for the manifest's data fields, the manifest's other fields, and a README on
 * running them and exporting each result into the folder that `--waist` reads.
 */
import { escapeControls } from '../errors.js';
import { optionKey } from '../periods/range.js';
import type { Rules } from '../rules/schema.js';
import { TIDEMARK_VERSION } from '../waist/build.js';
import { WAIST_TABLES, type TableName } from '../waist/tables.js';
import { compile } from './compile.js';
import { DIALECT, type DialectName } from './dialects.js';
import { DATA_FIELDS, manifestSelect, staticManifest } from './manifestQuery.js';
import { withCtes } from './query.js';
import { qualified, tableSource, type ColumnKind } from './source.js';

export interface PrintOptions {
  dialect: DialectName;
  rules: Rules;
  /** The events table or view, `name` or `schema.name` (or `project.dataset.name`). */
  table: string;
  /** How the timestamp column is typed (./source.ts). */
  timestamp: ColumnKind;
  /** Dates (YYYY-MM-DD) inside the first and last period, as --from and --to. */
  from?: string;
  to?: string;
  warmup?: number;
  /** The attribute column to split by. */
  by?: string;
}

/** The query file of each table, and the CSV the analyst exports it to. */
export const QUERY_FILES: Record<TableName, { sql: string; csv: string }> = Object.fromEntries(
  (Object.keys(WAIST_TABLES) as TableName[]).map((t) => [t, { sql: WAIST_TABLES[t].file.replace(/\.csv$/, '.sql'), csv: WAIST_TABLES[t].file }]),
) as Record<TableName, { sql: string; csv: string }>;

/** The files to write, name → text, in order. */
export function printSql(o: PrintOptions): Map<string, string> {
  const D = DIALECT[o.dialect];
  const r = o.rules;
  const scheme = { grain: r.grain, weekStart: r.weekStart };
  const fromKey = optionKey(o.from, scheme, 'from');
  const toKey = optionKey(o.to, scheme, 'to');
  const warmup = o.warmup ?? r.warmup;
  const c = r.columns;
  const columns = [
    { name: c.user, kind: 'text' as ColumnKind },
    { name: c.timestamp, kind: o.timestamp },
    { name: c.event, kind: 'text' as ColumnKind },
    ...(o.by !== undefined ? [{ name: o.by, kind: 'text' as ColumnKind }] : []),
  ];
  const source = tableSource(D, qualified(D, o.table), columns, r, o.by, o.table);
  const compiled = compile({ dialect: D, rules: r, source, range: { fromKey, toKey, warmup } });
  const engine = `sql-${o.dialect}`;
  const about = describe(o, warmup);
  const files = new Map<string, string>();
  for (const t of Object.keys(WAIST_TABLES) as TableName[]) {
    const head = [`tidemark ${TIDEMARK_VERSION}: the waist table ${WAIST_TABLES[t].file}, ${WAIST_TABLES[t].meaning}.`, ...about, `Export the result, with its header row, as ${QUERY_FILES[t].csv}.`];
    files.set(QUERY_FILES[t].sql, `${comment(head)}${withCtes(compiled.ctes, compiled.tables[t]).trimEnd()};\n`);
  }
  const mhead = [`tidemark ${TIDEMARK_VERSION}: the waist's manifest.json, as the one cell of one row.`, ...about, 'Save the text of that cell, as it is, as manifest.json (replacing the one tidemark sql wrote).'];
  files.set('manifest.sql', `${comment(mhead)}${withCtes(compiled.ctes, manifestSelect(D, r, engine, warmup, o.by)).trimEnd()};\n`);
  files.set('manifest.json', `${JSON.stringify(staticManifest(r, engine, warmup, o.by), null, 2)}\n`);
  files.set('README.md', readme(o, warmup));
  return files;
}

/** One-line facts about the query, for its header. */
function describe(o: PrintOptions, warmup: number): string[] {
  const r = o.rules;
  return [
    `Rules: ${r.name ?? '(unnamed)'} version ${r.version ?? '(none)'}: ${r.grain} grain${r.grain === 'week' ? ` from ${r.weekStart}` : ''}, zone ${r.timezone}, lapse limit ${r.lapseLimit}, at least ${r.activity.minEvents} key event(s)${r.activity.keyEvents ? ` (${r.activity.keyEvents.join(', ')})` : ''}, warm-up ${warmup}.`,
    `Dialect ${o.dialect}; events from ${o.table} (timestamps: ${o.timestamp})${o.from ? `, from ${o.from}` : ''}${o.to ? `, to ${o.to}` : ''}${o.by ? `, split by ${o.by}` : ''}.`,
    'Generated from the rules: change the rules and run tidemark sql again rather than editing this file.',
  ];
}

function comment(lines: string[]): string {
  // no line break or control code from a rules value may end the comment early
  return lines.map((l) => `-- ${escapeControls(l)}\n`).join('');
}

const RUN: Record<DialectName, { run: string; manifest: string }> = {
  duckdb: {
    run: 'duckdb events.duckdb -csv < transitions.sql > transitions.csv',
    manifest: 'duckdb events.duckdb -noheader -list < manifest.sql > manifest.json',
  },
  postgres: {
    // JIT compilation would cost seconds a query: the planner overestimates these queries
    run: 'PGOPTIONS=\'-c jit=off\' psql "$DATABASE_URL" --csv -f transitions.sql > transitions.csv',
    manifest: 'PGOPTIONS=\'-c jit=off\' psql "$DATABASE_URL" -At -f manifest.sql > manifest.json',
  },
  spark: {
    run: 'run transitions.sql (spark-sql -f, or a notebook cell) and write the result as CSV with a header',
    manifest: 'run manifest.sql and save its one value, as it is, as manifest.json',
  },
  trino: {
    run: 'trino --output-format CSV_HEADER --file transitions.sql > transitions.csv  (then remove the quotes trino puts around every field, or export from your client)',
    manifest: 'trino --output-format TSV --file manifest.sql > manifest.json',
  },
  bigquery: {
    run: 'bq query --use_legacy_sql=false --format=csv --max_rows=1000000 < transitions.sql > transitions.csv',
    manifest: 'run manifest.sql in the console and save its one value, as it is, as manifest.json',
  },
  snowflake: {
    run: 'snowsql -f transitions.sql -o output_format=csv -o header=true -o timing=false -o friendly=false > transitions.csv',
    manifest: 'snowsql -f manifest.sql -o output_format=plain -o header=false -o timing=false -o friendly=false > manifest.json',
  },
};

function readme(o: PrintOptions, warmup: number): string {
  const run = RUN[o.dialect];
  const tables = (Object.keys(WAIST_TABLES) as TableName[]).map((t) => `| \`${QUERY_FILES[t].sql}\` | \`${QUERY_FILES[t].csv}\` | ${WAIST_TABLES[t].meaning} |`);
  return `# A tidemark waist, built in ${o.dialect}

These queries count, inside your ${o.dialect} database, the small tables tidemark's analyses read (the
"waist"), from the events in \`${o.table}\`, under the rules *${o.rules.name ?? '(unnamed)'}* version
${o.rules.version ?? '(none)'} (${o.rules.grain} grain, zone ${o.rules.timezone}, warm-up ${warmup}). No event
row leaves the database: each query returns counts by period and state.

## 1. Run each query and export its result into this folder

Export every result as CSV with a header row (RFC 4180), under the name given below, into this folder.

| query | export as | one row counts |
|---|---|---|
${tables.join('\n')}
| \`manifest.sql\` | \`manifest.json\` | one row, one column: the whole manifest (see step 2) |

For example:

    ${run.run}

and the same for each query.

## 2. The manifest

\`manifest.json\` as written here holds what is known without data (the rules, the states, the format)
and \`null\` for the fields only the data can fill: ${DATA_FIELDS.map((f) => `\`${f}\``).join(', ')}.
\`manifest.sql\` returns the whole manifest, those fields filled, as the text of its one cell. Replace
\`manifest.json\` by that text, exactly as it is (not quoted as a CSV field):

    ${run.manifest}

A \`manifest.json\` still holding \`null\` is refused by tidemark, naming the field.

## 3. Run tidemark on the folder

    npx tidemark report --waist THIS_FOLDER --out report
    npx tidemark flows --waist THIS_FOLDER

tidemark checks every table against the manifest and the identities the tables obey (everyone in a
state moves somewhere in the next period, retention cells add up to the state counts…) and names the
file, line and column of anything wrong.

## What the queries assume

- The table has the columns \`${o.rules.columns.user}\` (user id), \`${o.rules.columns.timestamp}\` (timestamp) and \`${o.rules.columns.event}\` (event name)${o.by ? `, and \`${o.by}\`` : ''}.
- Timestamps are ${o.timestamp === 'text' ? 'text: ISO 8601 with Z or an offset is an instant, without one local time in the rules\' zone; digits are epoch seconds or milliseconds by magnitude; years 1900-2199 (as tidemark reads files)' : o.timestamp === 'instant' ? 'instants (a timestamp with a time zone), put into the rules\' zone by the database' : o.timestamp === 'local' ? 'local times in the rules\' zone (a timestamp without a time zone)' : 'numbers: epoch seconds or milliseconds by magnitude'}.
- The manifest lists only the \`--by\` attribute among the attributes, and the 50 most frequent event names.
`;
}

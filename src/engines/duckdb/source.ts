/**
 * Event sources for the DuckDB engine, as the relation the SQL compiler reads (tm_src, canonical
 * columns: see src/sql/compile.ts, SqlSource). DuckDB reads the files itself, out of core:
 * - CSV (and .csv.gz): RFC 4180 with the given delimiter, every column as text; rows DuckDB's reader
 *   refuses (a wrong number of fields, an unclosed quote…) are counted by reason from its rejects table;
 * - NDJSON (and .ndjson.gz): one line a row, read as text and taken apart with DuckDB's JSON
 *   functions, so that a line that is not a JSON object is counted, not lost;
 * - Parquet: typed columns (a timestamp with a time zone is an instant, one without is local time);
 * - a table or view in a DuckDB database file.
 * Headers (CSV) and attribute names (NDJSON: the keys of the first 1,000 objects) are read here, in
 * JavaScript, exactly as the memory engine reads them, so both engines see the same columns.
 */
import { createReadStream, existsSync, statSync } from 'node:fs';
import { createInterface } from 'node:readline';
import { createGunzip } from 'node:zlib';
import Papa from 'papaparse';
import { TidemarkError } from '../../errors.js';
import { headerPlan } from '../../ingest/header.js';
import { MAX_RECORD_BYTES } from '../../ingest/limits.js';
import type { Rules } from '../../rules/schema.js';
import type { SqlSource } from '../../sql/compile.js';
import { BLANK_REASON } from '../../sql/facts.js';
import { BLANK, renderPattern } from '../../sql/regex.js';
import { DIALECT } from '../../sql/dialects.js';
import { kindOfType, qualified, tableSource } from '../../sql/source.js';
import { noSplitColumn } from '../../lifecycle/perPerson.js';

export type DuckdbFileFormat = 'csv' | 'ndjson' | 'parquet';

/** Event files, as the memory engine's EventSource, plus Parquet. */
export interface DuckdbFiles {
  files: string[];
  format?: DuckdbFileFormat;
  skipBadRows?: boolean;
  delimiter?: string;
}

/** A table or view in a DuckDB database file. */
export interface DuckdbTable {
  db: string;
  table: string;
  skipBadRows?: boolean;
}

export type DuckdbInput = DuckdbFiles | DuckdbTable;

/** What preparing a source asks of the engine's connection. */
export interface SourceConnection {
  exec(sql: string): Promise<void>;
  /** The columns and types of a relation. */
  describe(relation: string): Promise<ColumnType[]>;
}

/** What a source needs the connection to do after the SQL runs. */
export interface PreparedSource {
  source: SqlSource;
  /** Rejects tables of the CSV and NDJSON scans, to count after the scan. */
  rejects: string[];
  files: string[];
  /**
   * Every file is CSV and the first rows of each have their timestamps in the fast form: worth a
   * pass that reads only that form (CompileInput.fastTimestamps), with the full pass as the fall-back.
   */
  fastTimestamps: boolean;
}

/**
 * The longest line DuckDB's CSV reader reads: the memory engine's bound (ingest/limits.ts, 1 MiB) and
 * the line break. DuckDB's read buffer is 16 times this line; with the 10 MB lines allowed before, one
 * 160 MB buffer held a whole 150 MB file and the scan ran on one thread (3M-event CSV, the scan alone:
 * 1.4 s against 1.0 s; 10M: 4.1 s against 2.5 s). A longer line is a rejected row, counted by reason,
 * or without --skip-bad-rows the memory reader's message ("a line longer than 1 MiB").
 */
const MAX_LINE_BYTES = MAX_RECORD_BYTES + 2;

const q = (s: string) => `'${s.replace(/'/g, "''")}'`;
const dq = (s: string) => `"${s.replace(/"/g, '""')}"`;

/** The format of a file from its extension (a trailing .gz is looked through). */
export function fileFormat(file: string, format?: DuckdbFileFormat): DuckdbFileFormat {
  if (format) return format;
  const name = file.toLowerCase().replace(/\.gz$/, '');
  if (/\.(csv|txt|tsv)$/.test(name)) return 'csv';
  if (/\.(ndjson|jsonl|json)$/.test(name)) return 'ndjson';
  if (/\.parquet$/.test(name)) return 'parquet';
  const ext = name.match(/\.[^./]*$/)?.[0] ?? '(none)';
  throw new TidemarkError('EVENTS_FORMAT', `cannot tell the format from the extension '${ext}'`, { file }, 'Pass --input-format csv, ndjson or parquet');
}

/** A regular file that exists; `flag` is the option that named it (--events, or --db for a database file). */
function mustExist(file: string, flag = '--events'): void {
  if (!existsSync(file) || !statSync(file).isFile()) throw new TidemarkError('FILE_NOT_FOUND', flag === '--db' ? 'cannot read the database file' : 'cannot read the events file', { file }, `Check the path given to ${flag}`);
}

function textStream(file: string): NodeJS.ReadableStream {
  const raw = createReadStream(file);
  return file.toLowerCase().endsWith('.gz') ? raw.pipe(createGunzip()) : raw;
}

/** The first `bytes` characters of a (possibly gzip-compressed) file. */
async function head(file: string, bytes = 1 << 20): Promise<string> {
  let text = '';
  const stream = textStream(file);
  try {
    for await (const chunk of stream as AsyncIterable<Buffer>) {
      text += chunk.toString('utf8');
      if (text.length >= bytes) break;
    }
  } catch {
    throw new TidemarkError('FILE_UNREADABLE', 'cannot read the events file (is it really gzip-compressed?)', { file });
  } finally {
    (stream as unknown as { destroy?: () => void }).destroy?.();
  }
  return text;
}

/** Data rows of a CSV file's head that {@link csvHeader} returns for a look at their timestamps. */
export const SAMPLE_ROWS = 1000;

/**
 * The header row of a CSV file, as papaparse reads it (BOM dropped), and up to {@link SAMPLE_ROWS}
 * rows after it from the file's first MiB (the last one left out, as it may be cut short).
 */
async function csvHeader(file: string, delimiter: string): Promise<{ header: string[]; sample: string[][] } | undefined> {
  const text = await head(file);
  if (text.length === 0) return undefined;
  const parsed = Papa.parse<string[]>(text, { preview: SAMPLE_ROWS + 2, delimiter });
  const row = parsed.data[0];
  if (!row) return undefined;
  if (row.length > 0 && row[0].charCodeAt(0) === 0xfeff) row[0] = row[0].slice(1);
  return { header: row, sample: parsed.data.slice(1, SAMPLE_ROWS + 1) };
}

/**
 * Whether a timestamp text is in the commonest form, `YYYY-MM-DDTHH:MM:SS[.sss]Z` with an hour below
 * 24: the shape the SQL's fast step (DIALECT.duckdb.fastUtcMs) reads. Only a guess about a file from
 * its first rows: the engine checks every row and runs the full parse when one is in another form.
 */
export function fastTimestampForm(s: string): boolean {
  return /^\d{4}-\d{2}-\d{2}T(?:[01]\d|2[0-3]):\d{2}:\d{2}(?:\.\d{3})?Z$/.test(s);
}

/** The attribute names of an NDJSON file: keys of the first 1,000 JSON objects other than the mapped columns, in order of first appearance (ingest/ndjson.ts). */
async function ndjsonKeys(file: string, mapped: Set<string>): Promise<string[]> {
  const names = new Set<string>();
  const lines = createInterface({ input: textStream(file), crlfDelay: Infinity });
  let seen = 0, n = 0;
  try {
    for await (const raw of lines) {
      const s = n++ === 0 && raw.charCodeAt(0) === 0xfeff ? raw.slice(1) : raw;
      if (s.trim() === '') continue;
      let obj: unknown;
      try {
        obj = JSON.parse(s);
      } catch {
        continue;
      }
      if (obj === null || typeof obj !== 'object' || Array.isArray(obj)) continue;
      for (const k of Object.keys(obj)) if (!mapped.has(k)) names.add(k);
      if (++seen >= 1000) break;
    }
  } finally {
    lines.close();
  }
  return [...names];
}

interface FileSelect {
  /** Select-list items for the canonical columns other than the attributes. */
  base: string;
  from: string;
  /** attribute name → expression in this file. */
  attrs: Map<string, string>;
}

/** A column of a typed relation (DESCRIBE). */
export interface ColumnType {
  name: string;
  type: string;
}

/** JavaScript's String(number) for a double: integers in plain digits (below 1e21), others as DuckDB writes them. */
const jsNumber = (d: string) => `CASE WHEN ${d} = floor(${d}) AND abs(${d}) < 1e21 THEN CAST(CAST(${d} AS HUGEINT) AS VARCHAR) ELSE CAST(${d} AS VARCHAR) END`;
const pointer = (key: string) => q(`/${key.replace(/~/g, '~0').replace(/\//g, '~1')}`);
const NUMERIC_JSON = "('BIGINT', 'UBIGINT', 'DOUBLE')";

/** A JSON member as the memory engine's text(): strings as they are, numbers as JavaScript prints them, objects as JSON, null as missing. */
/** A member as text, as src/ingest/ndjson.ts reads it: strings, numbers and booleans; null, objects and arrays are no value. */
function jsonText(key: string): string {
  const path = pointer(key);
  const t = `json_type(line, ${path})`;
  return `CASE WHEN NOT ok THEN NULL WHEN ${t} IN ${NUMERIC_JSON} THEN ${jsNumber(`CAST(json_extract(line, ${path}) AS DOUBLE)`)} WHEN ${t} IN ('NULL', 'OBJECT', 'ARRAY') THEN NULL ELSE json_extract_string(line, ${path}) END`;
}

const BLANK_LINE = `regexp_full_match(l0, ${q(renderPattern(BLANK, 'noncapturing').source)})`;

async function csvSelect(file: string, i: number, rules: Rules, delimiter: string, attributes: string[], rejects: string[]): Promise<{ sel: FileSelect; hasEvent: boolean; fastLooking: boolean }> {
  const cols = rules.columns;
  const read = await csvHeader(file, delimiter);
  const header = read?.header;
  if (!read || !header) throw new TidemarkError('EVENTS_FORMAT', 'the file is empty: it needs a header line', { file, line: 1 }, `Start the file with a header such as ${cols.user},${cols.timestamp},${cols.event}`);
  const plan = headerPlan(header, cols, rules.activity.keyEvents !== undefined, file);
  for (const a of plan.attributeNames) if (!attributes.includes(a)) attributes.push(a);
  const raw = (j: number) => `c${j}`;
  const columns = `{${header.map((_, j) => `${q(raw(j))}: 'VARCHAR'`).join(', ')}}`;
  const rej = `tm_rejects_${i}`;
  rejects.push(rej);
  const from = `read_csv(${q(file)}, auto_detect = false, header = true, delim = ${q(delimiter)}, quote = '"', escape = '"', columns = ${columns}, strict_mode = true, ignore_errors = true, store_rejects = true, rejects_table = ${q(rej)}, rejects_scan = ${q(`${rej}_scan`)}, max_line_size = ${MAX_LINE_BYTES})`;
  return {
    hasEvent: plan.event >= 0,
    // rows of the right length only: one with a field too many or too few is the reader's to reject
    fastLooking: read.sample.filter((r) => r.length === header.length).every((r) => fastTimestampForm(r[plan.timestamp])),
    sel: {
      base: `${raw(plan.user)} AS user_id, ${raw(plan.timestamp)} AS ts_text, CAST(NULL AS DOUBLE) AS ts_num, CAST(NULL AS BIGINT) AS ts_instant, CAST(NULL AS BIGINT) AS ts_local, ${plan.event >= 0 ? `coalesce(${raw(plan.event)}, '')` : 'CAST(NULL AS VARCHAR)'} AS event, CAST(NULL AS VARCHAR) AS pre_reason`,
      from,
      attrs: new Map(plan.attributeNames.map((a, k) => [a, `coalesce(${raw(plan.attributePositions[k])}, '')`])),
    },
  };
}

async function ndjsonSelect(file: string, i: number, rules: Rules, attributes: string[], rejects: string[]): Promise<FileSelect> {
  const cols = rules.columns;
  const keys = await ndjsonKeys(file, new Set([cols.user, cols.timestamp, cols.event]));
  for (const a of keys) if (!attributes.includes(a)) attributes.push(a);
  const rej = `tm_rejects_${i}`;
  rejects.push(rej);
  // one column a line: the delimiter is four control characters no JSON line holds
  const read = `read_csv(${q(file)}, auto_detect = false, header = false, delim = chr(30) || chr(31) || chr(30) || chr(31), quote = '', escape = '', columns = {'line': 'VARCHAR'}, strict_mode = false, ignore_errors = true, store_rejects = true, rejects_table = ${q(rej)}, rejects_scan = ${q(`${rej}_scan`)}, max_line_size = ${MAX_LINE_BYTES})`;
  const tsPath = pointer(cols.timestamp);
  // an id is a string or a whole number written plainly within 2^53 − 1, as src/ingest/ndjson.ts reads it
  // (DuckDB types 7.0 and 7e0 as DOUBLE, larger whole numbers as HUGEINT)
  const userPath = pointer(cols.user);
  const tsNumeric = `ok AND json_type(line, ${tsPath}) IN ${NUMERIC_JSON}`;
  return {
    base: `${jsonText(cols.user)} AS user_id,
  CASE WHEN ${tsNumeric} THEN NULL ELSE ${jsonText(cols.timestamp)} END AS ts_text,
  CASE WHEN ${tsNumeric} THEN CAST(json_extract(line, ${tsPath}) AS DOUBLE) END AS ts_num,
  CAST(NULL AS BIGINT) AS ts_instant, CAST(NULL AS BIGINT) AS ts_local,
  ${jsonText(cols.event)} AS event,
  CASE WHEN is_blank THEN ${q(BLANK_REASON)} WHEN NOT ok THEN 'not valid JSON'
    WHEN json_type(line, ${userPath}) IN ('OBJECT', 'ARRAY', 'BOOLEAN', 'DOUBLE', 'HUGEINT') THEN 'bad user id'
    WHEN json_type(line, ${userPath}) IN ('UBIGINT', 'BIGINT') AND abs(CAST(json_extract(line, ${userPath}) AS DOUBLE)) > 9007199254740991 THEN 'bad user id' END AS pre_reason`,
    // the JSON functions fail on text that is not JSON, and DuckDB may compute a repeated expression
    // for every row before any CASE picks (common subexpressions): they only ever see valid JSON
    from: `(SELECT jline AS line, is_blank, NOT is_blank AND valid AND json_type(jline) = 'OBJECT' AS ok
  FROM (SELECT CASE WHEN valid THEN line ELSE '{}' END AS jline, is_blank, valid
        FROM (SELECT line, is_blank, coalesce(json_valid(line), false) AS valid
              FROM (SELECT CASE WHEN substr(l0, 1, 1) = chr(65279) THEN substr(l0, 2) ELSE l0 END AS line, l0 IS NULL OR ${BLANK_LINE} AS is_blank
                    FROM (SELECT line AS l0 FROM ${read}) r0) r1) r2) r3) r4`,
    attrs: new Map(keys.map((k) => [k, `coalesce(${jsonText(k)}, '')`])),
  };
}

/** Typed columns (Parquet): text as text; a timestamp with a time zone is an instant, one without (or a date) local time; a number epoch time. */
function typedSelect(from: string, columns: ColumnType[], rules: Rules, attributes: string[], file: string): { sel: FileSelect; hasEvent: boolean } {
  const D = DIALECT.duckdb;
  const plan = headerPlan(columns.map((c) => c.name), rules.columns, rules.activity.keyEvents !== undefined, file);
  for (const a of plan.attributeNames) if (!attributes.includes(a)) attributes.push(a);
  const ref = (j: number) => dq(columns[j].name);
  const text = (j: number) => `CAST(${ref(j)} AS VARCHAR)`;
  const ts = ref(plan.timestamp);
  const kind = kindOfType(columns[plan.timestamp].type);
  const tsCols = [
    `${kind === 'text' ? text(plan.timestamp) : 'CAST(NULL AS VARCHAR)'} AS ts_text`,
    `${kind === 'number' ? `CAST(${ts} AS DOUBLE)` : 'CAST(NULL AS DOUBLE)'} AS ts_num`,
    `${kind === 'instant' ? D.msOfInstant(ts) : 'CAST(NULL AS BIGINT)'} AS ts_instant`,
    `${kind === 'local' ? D.msOfLocal(ts) : 'CAST(NULL AS BIGINT)'} AS ts_local`,
  ].join(', ');
  return {
    hasEvent: plan.event >= 0,
    sel: {
      base: `${text(plan.user)} AS user_id, ${tsCols}, ${plan.event >= 0 ? text(plan.event) : 'CAST(NULL AS VARCHAR)'} AS event, CAST(NULL AS VARCHAR) AS pre_reason`,
      from,
      attrs: new Map(plan.attributeNames.map((a, k) => [a, `coalesce(${text(plan.attributePositions[k])}, '')`])),
    },
  };
}

/**
 * The source relation for event files or a DuckDB table.
 * @param describe the columns and types of a relation (a DESCRIBE on the engine's connection)
 * @param by the attribute column to split by, if any
 * @throws TidemarkError FILE_NOT_FOUND, EVENTS_FORMAT (unknown extension, no header, a mapped column
 *   missing), INPUT_INVALID (a --by column the events lack)
 */
export async function prepareSource(input: DuckdbInput, rules: Rules, db: SourceConnection, by?: string): Promise<PreparedSource> {
  const describe = (rel: string) => db.describe(rel);
  const attributes: string[] = [];
  const selects: FileSelect[] = [];
  const rejects: string[] = [];
  let hasEvent = false;
  let files: string[];
  let fastLooking = true;
  if ('db' in input) {
    mustExist(input.db, '--db');
    try {
      await db.exec(`ATTACH ${q(input.db)} AS tm_srcdb (READ_ONLY)`);
    } catch (e) {
      throw new TidemarkError('FILE_UNREADABLE', `not a DuckDB database: ${String((e as Error).message).split('\n')[0]}`, { file: input.db }, 'Give a database file written by DuckDB with --db');
    }
    const rel = `tm_srcdb.${qualified(DIALECT.duckdb, input.table)}`;
    const columns = await describeWith(describe, rel, input.db, input.table);
    return { source: tableSource(DIALECT.duckdb, rel, columns.map((c) => ({ name: c.name, kind: kindOfType(c.type) })), rules, by, input.db), rejects: [], files: [input.db], fastTimestamps: false };
  } else {
    files = input.files;
    const formats = files.map((f) => fileFormat(f, input.format));
    for (const f of files) mustExist(f);
    for (let i = 0; i < files.length; i++) {
      if (formats[i] === 'csv') {
        const c = await csvSelect(files[i], i, rules, input.delimiter ?? ',', attributes, rejects);
        selects.push(c.sel);
        hasEvent ||= c.hasEvent;
        fastLooking &&= c.fastLooking;
      } else if (formats[i] === 'ndjson') {
        selects.push(await ndjsonSelect(files[i], i, rules, attributes, rejects));
        hasEvent = true;
      }
    }
    const parquet = files.filter((_, i) => formats[i] === 'parquet');
    if (parquet.length > 0) {
      const rel = `read_parquet([${parquet.map(q).join(', ')}], union_by_name = true)`;
      const typed = typedSelect(rel, await describeWith(describe, rel, parquet.join(', ')), rules, attributes, parquet.join(', '));
      selects.push(typed.sel);
      hasEvent ||= typed.hasEvent;
    }
  }
  let byIndex = -1;
  if (by !== undefined) {
    byIndex = attributes.indexOf(by);
    if (byIndex < 0) throw noSplitColumn(by, attributes);
  }
  const parts = selects.map((s) => {
    const attrs = attributes.map((a, k) => `${s.attrs.get(a) ?? "''"} AS attr_${k}`);
    const byValue = byIndex >= 0 ? [`${s.attrs.get(by as string) ?? "''"} AS by_value`] : [];
    return `SELECT ${[s.base, ...attrs, ...byValue].join(', ')}
FROM ${s.from}`;
  });
  return {
    source: {
      select: parts.join('\nUNION ALL\n'),
      has: { tsText: true, tsNum: true, tsInstant: true, tsLocal: true, preReason: true, event: hasEvent, by: byIndex >= 0 },
      attributes,
    },
    rejects,
    files,
    fastTimestamps: fastLooking && files.every((f) => fileFormat(f, input.format) === 'csv'),
  };
}

async function describeWith(describe: (relation: string) => Promise<ColumnType[]>, rel: string, file: string, table?: string): Promise<ColumnType[]> {
  try {
    return await describe(rel);
  } catch (e) {
    const what = table ? `no table or view '${table}' in the database` : 'cannot read the Parquet file(s)';
    throw new TidemarkError(table ? 'INPUT_INVALID' : 'FILE_UNREADABLE', `${what}: ${String((e as Error).message).split('\n')[0]}`, { file }, table ? 'Give the name of a table or view with --table' : 'Check that the file is Parquet');
  }
}

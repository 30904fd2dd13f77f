/**
 * Parquet events, read with hyparquet (pure JavaScript; codecs from hyparquet-compressors: Snappy,
 * gzip, zstd, Brotli, LZ4), one row group at a time. The columns are found by name as in a CSV header;
 * every other top-level column of scalar values is an attribute (a list, map or struct column is none).
 *
 * Values by type:
 * - user id: a string as written; an integer column's value as its decimal digits (so `123` here and
 *   `"123"` in a CSV are one id); a floating-point or boolean value is no id (*bad user id*); null is a
 *   missing id.
 * - timestamp: a TIMESTAMP column adjusted to UTC (and INT96, by convention UTC) is an instant, put into
 *   the rules' zone; a TIMESTAMP column not adjusted to UTC is local wall-clock time, as an ISO text
 *   without an offset is; a DATE is that local day; a string is read as in CSV; an integer column is epoch
 *   time by the CSV rule (seconds, or milliseconds from 1e11 on). Units finer than a millisecond are cut
 *   to the millisecond below (floor).
 * - event and attributes: strings; other scalars as their text; null is no value.
 * Strings must be UTF-8: bytes that are not are never guessed (the row is rejected, *invalid UTF-8*).
 *
 * A Parquet file has no lines: messages give the row number (1-based, counted over the row groups) as
 * the line, and the line accounting counts one line a row (no header, no blank lines).
 */
import { isUtf8 } from 'node:buffer';
import { stat } from 'node:fs/promises';
import { asyncBufferFromFile, parquetMetadataAsync, parquetRead, parquetSchema, type FileMetaData, type SchemaTree } from 'hyparquet';
import { compressors } from 'hyparquet-compressors';
import { TidemarkError, showValue } from '../errors.js';
import type { EventLogBuilder } from './eventLog.js';
import { headerPlan } from './header.js';
import { MAX_COLUMNS } from './limits.js';
import { fileError } from './source.js';

/** A string column's value whose bytes are not UTF-8. */
class NotUtf8 {
  constructor(readonly bytes: Uint8Array) {}
}

const utf8 = new TextDecoder('utf-8');

/** Floor division of a bigint count of `perMs` units by `perMs`, as a number of milliseconds. */
function floorMs(v: bigint, perMs: bigint): number {
  let q = v / perMs;
  if (v % perMs < 0n) q -= 1n;
  return Number(q);
}

const parsers = {
  timestampFromMilliseconds: (v: bigint) => Number(v),
  timestampFromMicroseconds: (v: bigint) => floorMs(v, 1000n),
  timestampFromNanoseconds: (v: bigint) => floorMs(v, 1_000_000n),
  dateFromDays: (days: number) => days * 86_400_000,
  stringFromBytes: (b: Uint8Array) => (isUtf8(b) ? utf8.decode(b) : new NotUtf8(b)),
};

/**
 * The user column's strings are kept as bytes: a known id is found by them (no string, no check), and
 * only a new id is checked as UTF-8 and decoded (about a third of the read's time was these strings
 * and their garbage).
 */
const userParsers = { ...parsers, stringFromBytes: (b: Uint8Array) => b };

/** How a timestamp column's values become wall-clock ms. */
type TimeKind = 'instant' | 'local' | 'text' | 'epoch' | 'other';

function timeKind(t: SchemaTree): TimeKind {
  const e = t.element;
  if (e.logical_type?.type === 'TIMESTAMP') return e.logical_type.isAdjustedToUTC ? 'instant' : 'local';
  if (e.converted_type === 'TIMESTAMP_MILLIS' || e.converted_type === 'TIMESTAMP_MICROS' || e.type === 'INT96') return 'instant';
  if (e.converted_type === 'DATE' || e.logical_type?.type === 'DATE') return 'local';
  if (e.type === 'BYTE_ARRAY' || e.type === 'FIXED_LEN_BYTE_ARRAY') return 'text';
  if (e.type === 'INT32' || e.type === 'INT64') return 'epoch';
  return 'other';
}

/** A user id value as text, or why it is none. */
function idOf(v: unknown): string | { problem: string; shown?: string } {
  if (v === null || v === undefined) return '';
  if (typeof v === 'string') return v;
  if (typeof v === 'bigint') return v.toString();
  if (typeof v === 'number' && Number.isSafeInteger(v)) return String(v);
  if (typeof v === 'number') return { shown: String(v), problem: `the number ${v} is not a whole number an id can be: write ids as strings or integers` };
  return { problem: `${typeof v} is not an id: an id is a string or an integer` };
}

/** A scalar value as attribute or event text; undefined for null. */
function textOf(v: unknown): string | undefined {
  if (v === null || v === undefined) return undefined;
  if (typeof v === 'string') return v;
  if (typeof v === 'number' || typeof v === 'bigint' || typeof v === 'boolean') return String(v);
  if (v instanceof Date) return v.toISOString();
  return JSON.stringify(v);
}

/** `onBytes` hears of progress as the file's share of the row groups read so far (by rows). */
export async function readParquet(file: string, builder: EventLogBuilder, columns: { user: string; timestamp: string; event: string }, needEvent: boolean, onBytes?: (n: number) => void): Promise<void> {
  let meta: FileMetaData;
  let buffer: Awaited<ReturnType<typeof asyncBufferFromFile>>;
  try {
    const st = await stat(file);
    if (st.isDirectory()) throw fileError({ code: 'EISDIR' }, file);
    if (!st.isFile()) {
      throw new TidemarkError('EVENTS_FORMAT', 'Parquet is read by seeking in a file; a pipe or standard input cannot be read as Parquet', { file },
        'Save the data to a file first, or send CSV or NDJSON through the pipe');
    }
    buffer = await asyncBufferFromFile(file);
    meta = await parquetMetadataAsync(buffer);
  } catch (err) {
    if (err instanceof TidemarkError) throw err;
    const code = (err as { code?: string })?.code;
    if (code) throw fileError(err, file);
    throw new TidemarkError('EVENTS_FORMAT', `this is not a Parquet file tidemark can read (${showValue((err as Error)?.message ?? err, 120)})`, { file },
      'Check the file, or pass --input-format csv or ndjson if it is not Parquet');
  }
  const schema = parquetSchema(meta);
  const top = schema.children;
  const scalar = (t: SchemaTree) => t.children.length === 0 && t.element.repetition_type !== 'REPEATED';
  const plan = headerPlan(top.map((t) => t.element.name), columns, needEvent, file);
  const names = top.map((t) => t.element.name);
  const userT = top[plan.user], tsT = top[plan.timestamp];
  for (const [t, role] of [[userT, 'user'], [tsT, 'timestamp']] as const) {
    if (!scalar(t)) throw new TidemarkError('EVENTS_FORMAT', `the ${role} column '${showValue(t.element.name)}' holds lists or records, not one value a row`, { file, column: t.element.name }, `Map a column of plain values with --${role}-column`);
  }
  const kind = timeKind(tsT);
  // a BYTE_ARRAY user column's values come as bytes (userParsers) where the other columns' come as text
  const userBytes = userT.element.type === 'BYTE_ARRAY';
  const attrPos = plan.attributePositions.filter((i) => scalar(top[i])).slice(0, MAX_COLUMNS);
  const attrNames = attrPos.map((i) => names[i]);
  const wanted = [plan.timestamp, ...(plan.event >= 0 && scalar(top[plan.event]) ? [plan.event] : []), ...attrPos].map((i) => names[i]);
  builder.startFile(file, attrNames);
  builder.header(0);
  const attrs = new Array<string>(attrNames.length).fill('');
  const users = new Map<string, number>();
  const eventName = plan.event >= 0 ? names[plan.event] : undefined;
  let row = 0;
  // the timestamp as shown in a message, made only when one is needed (no closure a row)
  let shownTs: unknown;
  const tsText = () => (shownTs === null || shownTs === undefined ? '' : String(shownTs));
  for (const rg of meta.row_groups) {
    const rowStart = row, rowEnd = row + Number(rg.num_rows);
    const cols = new Map<string, ArrayLike<unknown>>();
    // usually one chunk a column covers the row group: used as it is
    const onChunk = (c: { columnName: string; columnData: unknown; rowStart: number; rowEnd: number }) => {
      const data = c.columnData as ArrayLike<unknown>;
      const have = cols.get(c.columnName);
      if (!have && c.rowStart === rowStart && c.rowEnd >= rowEnd) return void cols.set(c.columnName, data);
      let arr = have as unknown[] | undefined;
      if (!arr || !Array.isArray(arr)) {
        const fresh = new Array<unknown>(rowEnd - rowStart);
        if (arr) for (let i = 0; i < fresh.length; i++) fresh[i] = (arr as ArrayLike<unknown>)[i];
        cols.set(c.columnName, (arr = fresh));
      }
      for (let i = Math.max(c.rowStart, rowStart); i < Math.min(c.rowEnd, rowEnd); i++) arr[i - rowStart] = data[i - c.rowStart];
    };
    try {
      await parquetRead({ file: buffer, metadata: meta, columns: [names[plan.user]], rowStart, rowEnd, utf8: true, parsers: userParsers, compressors, onChunk });
      await parquetRead({ file: buffer, metadata: meta, columns: wanted, rowStart, rowEnd, utf8: true, parsers, compressors, onChunk });
    } catch (err) {
      throw new TidemarkError('EVENTS_FORMAT', `the Parquet data of rows ${(rowStart + 1).toLocaleString('en-US')}–${rowEnd.toLocaleString('en-US')} cannot be read (${showValue((err as Error)?.message ?? err, 120)})`, { file },
        'Check the file, or export it again (tidemark reads Snappy, gzip, zstd, Brotli and LZ4 compression)');
    }
    const u = cols.get(names[plan.user])!, t = cols.get(names[plan.timestamp])!, ev = eventName ? cols.get(eventName) : undefined;
    const av = attrNames.map((n) => cols.get(n)!);
    for (let i = 0; i < rowEnd - rowStart; i++) {
      const line = rowStart + i + 1;
      let uv = u[i];
      const tv = t[i], evv = ev?.[i];
      // a string id as bytes: its code when known, else its text (or NotUtf8)
      let byBytes = -1;
      if (userBytes && uv instanceof Uint8Array) {
        byBytes = builder.knownUser(uv, 0, uv.length);
        if (byBytes < 0) uv = parsers.stringFromBytes(uv);
      }
      let bad = uv instanceof NotUtf8 || tv instanceof NotUtf8 || evv instanceof NotUtf8;
      for (let a = 0; a < av.length && !bad; a++) bad = av[a][i] instanceof NotUtf8;
      if (bad) {
        builder.reject('invalid UTF-8', file, line, undefined, undefined, 'A string value is not UTF-8 (values are never guessed): export the file again with UTF-8 strings, or pass --skip-bad-rows');
        continue;
      }
      const id = byBytes >= 0 ? '' : typeof uv === 'string' ? uv : idOf(uv);
      if (typeof id !== 'string') {
        builder.reject('bad user id', file, line, columns.user, id.shown, id.problem);
        continue;
      }
      for (let a = 0; a < av.length; a++) {
        const v = av[a][i];
        attrs[a] = typeof v === 'string' ? v : textOf(v) ?? '';
      }
      const known = byBytes >= 0 ? byBytes : users.get(id);
      const event = typeof evv === 'string' ? evv : textOf(evv);
      if (kind === 'text' || typeof tv === 'string') builder.add(file, line, known ?? id, typeof tv === 'string' ? tv : '', event, attrs);
      else {
        const ms = typeof tv === 'bigint' ? Number(tv) : typeof tv === 'number' ? tv : NaN;
        const wall = kind === 'epoch' ? builder.epochWall(ms) : kind === 'instant' ? builder.instantWall(ms) : kind === 'local' ? builder.localWall(ms) : undefined;
        shownTs = tv;
        builder.addTimed(file, line, known ?? id, wall, tsText, event, attrs);
      }
      if (known === undefined && id !== '' && !(userBytes && u[i] instanceof Uint8Array)) {
        const c = builder.userCodeOf(id);
        if (c >= 0) users.set(id, c);
      }
    }
    onBytes?.(Math.round((buffer.byteLength * (rowEnd - rowStart)) / Math.max(1, Number(meta.num_rows))));
    row = rowEnd;
  }
  builder.endFile(row);
}

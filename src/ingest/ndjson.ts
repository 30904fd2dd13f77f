/**
 * NDJSON events: one JSON object a line (LF or CRLF), read once in chunks with our own line splitter
 * (a line is bounded: see limits.ts). Scalar fields other than the mapped columns are kept as
 * attributes (the set of attribute names is the union over the first 1,000 lines; a key first seen
 * later is ignored; an object or array value is no attribute value).
 *
 * Ids: a string is an id as written. A number is an id only when it is a safe integer written as a
 * plain integer token (`123`, not `123.0`, `1e3` or `-0`, and at most 2^53 − 1 in size): JSON.parse
 * turns numbers into doubles, so beyond that two ids could become one. Objects, arrays and booleans
 * are not ids; null counts as a missing id; a string with a lone surrogate (`"\ud800"`) is no text and
 * is refused.
 */
import { TidemarkError } from '../errors.js';
import type { EventLogBuilder } from './eventLog.js';
import { rawMember } from './jsonRaw.js';
import { DEFAULT_LIMITS, MAX_COLUMNS, bytesText, type ScanLimits } from './limits.js';
import { ChunkReader } from './source.js';
import { byteOrderMark, firstInvalidUtf8, inspectChunk, invalidUtf8Hint, type ChunkText, type SliceBuffer } from './text.js';

const SAMPLE = 1000;
const PLAIN_INTEGER = /^(?:0|-?[1-9][0-9]*)$/;
const LONE_SURROGATE = /[\ud800-\udbff](?![\udc00-\udfff])|(?<![\ud800-\udbff])[\udc00-\udfff]/;

type Obj = Record<string, unknown>;

function own(obj: Obj, key: string): unknown {
  return Object.hasOwn(obj, key) ? obj[key] : undefined;
}

/** A scalar as text; undefined for null, absent, objects and arrays. */
function scalar(v: unknown): string | undefined {
  if (typeof v === 'string') return v;
  if (typeof v === 'number' || typeof v === 'boolean') return String(v);
  return undefined;
}

function kind(v: unknown): string {
  return Array.isArray(v) ? 'an array' : v === null ? 'null' : typeof v === 'object' ? 'an object' : typeof v === 'boolean' ? `a boolean (${v})` : typeof v;
}

/** The user id of a parsed line, or why the value is no id. */
export function userIdOf(v: unknown, raw: () => string | undefined): { id: string } | { problem: string; shown?: string } {
  if (typeof v === 'string') {
    // "\ud800" and "\ud801" are two JSON strings but no text: as UTF-8 both would be U+FFFD, one id
    if (LONE_SURROGATE.test(v)) return { shown: JSON.stringify(v), problem: 'the id holds a lone UTF-16 surrogate (a broken \\u escape), which is not text and could merge with another id: fix the export' };
    return { id: v };
  }
  if (v === undefined || v === null) return { id: '' };
  if (typeof v === 'number') {
    const token = raw() ?? String(v);
    if (!PLAIN_INTEGER.test(token)) {
      return { shown: token, problem: `the number ${token} is not written as a plain whole number, so it could stand for the same id as another spelling (123.0 and 123): write ids as strings, or as plain integers` };
    }
    if (!Number.isSafeInteger(v)) {
      return { shown: token, problem: `the number ${token} is beyond 2^53 − 1 (9007199254740991), where JSON numbers lose digits and two ids could become one: write ids as strings` };
    }
    return { id: token };
  }
  return { problem: `${kind(v)} is not an id: an id is a string, or a whole number written plainly` };
}

export async function readNdjson(file: string, builder: EventLogBuilder, columns: { user: string; timestamp: string; event: string }, limits: ScanLimits = DEFAULT_LIMITS, onBytes?: (n: number) => void): Promise<void> {
  const mapped = new Set([columns.user, columns.timestamp, columns.event]);
  const pending: { line: number; obj: Obj; text: string }[] = [];
  let attrNames: string[] | undefined;
  let attrs: string[] = [];

  const flush = (line: number, obj: Obj, text: string) => {
    const user = userIdOf(own(obj, columns.user), () => rawMember(text, columns.user));
    if ('problem' in user) return builder.reject('bad user id', file, line, columns.user, user.shown, user.problem);
    const names = attrNames as string[];
    for (let a = 0; a < names.length; a++) attrs[a] = scalar(own(obj, names[a])) ?? '';
    const t = own(obj, columns.timestamp);
    const ts = typeof t === 'string' ? t : typeof t === 'number' ? String(t) : t === undefined || t === null ? '' : `(${kind(t)})`;
    builder.add(file, line, user.id, ts, scalar(own(obj, columns.event)), attrs);
  };
  const start = () => {
    const names = new Set<string>();
    for (const p of pending) {
      for (const k of Object.keys(p.obj)) {
        if (mapped.has(k) || names.has(k) || scalar(p.obj[k]) === undefined) continue;
        names.add(k);
        if (names.size > MAX_COLUMNS) {
          throw new TidemarkError('EVENTS_FORMAT', `the first lines hold more than ${MAX_COLUMNS.toLocaleString('en-US')} distinct keys, more attributes than tidemark keeps`, { file, line: p.line },
            'Keep the user, timestamp and event keys and the attributes you need');
        }
      }
    }
    attrNames = [...names];
    attrs = new Array<string>(attrNames.length).fill('');
    builder.startFile(file, attrNames);
    for (const p of pending) flush(p.line, p.obj, p.text);
    pending.length = 0;
  };

  const r = await ChunkReader.open(file, limits.chunk, undefined, onBytes);
  try {
    await r.refill(0);
    let pos = byteOrderMark(r.buf, r.end, file);
    let line = 1;
    let chunk: ChunkText = inspectChunk(r, pos, pos, line);
    for (;;) {
      let k = r.buf.indexOf(10, pos);
      if (k < 0 || k >= r.end) {
        if (!r.eof) {
          if (r.end - pos > limits.maxRecordBytes + 1) throw tooLong(file, line, limits);
          const kept = await r.refill(pos);
          pos = 0;
          chunk = inspectChunk(r, 0, kept, line);
          continue;
        }
        if (pos >= r.end) break;
        k = r.end;
      }
      const buf = r.buf;
      let e = k;
      if (e > pos && buf[e - 1] === 13) e--;
      if (e - pos > limits.maxRecordBytes) throw tooLong(file, line, limits);
      let s = pos;
      while (s < e && (buf[s] === 32 || buf[s] === 9 || buf[s] === 13)) s++;
      const bad = chunk.dirty ? firstInvalidUtf8(buf, pos, e) : -1;
      if (s === e) builder.blank();
      else if (bad >= 0) builder.reject('invalid UTF-8', file, line, undefined, undefined, invalidUtf8Hint(r.base + bad, buf[bad]));
      else {
        const text = chunk.ascii ? chunk.text.slice(pos, e) : (buf as SliceBuffer).utf8Slice(pos, e);
        let obj: unknown;
        try {
          obj = JSON.parse(text);
        } catch {
          obj = undefined;
        }
        if (obj === null || typeof obj !== 'object' || Array.isArray(obj)) {
          builder.reject('not valid JSON', file, line, undefined, text, 'Each line must be one JSON object, or pass --skip-bad-rows');
        } else if (attrNames) flush(line, obj as Obj, text);
        else {
          pending.push({ line, obj: obj as Obj, text });
          if (pending.length >= SAMPLE) start();
        }
      }
      line++;
      pos = k + 1;
    }
    if (!attrNames) start();
    builder.endFile(line - 1);
  } finally {
    await r.close();
  }
}

function tooLong(file: string, line: number, limits: ScanLimits): TidemarkError {
  return new TidemarkError('EVENTS_FORMAT', `a line longer than ${bytesText(limits.maxRecordBytes)} (the longest line tidemark reads): this does not look like an NDJSON event log`,
    { file, line }, 'Check the file; one event a line, shorten very long values');
}


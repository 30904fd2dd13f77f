/**
 * The in-memory event log: columnar, dictionary-encoded.
 *
 * One row per used event: the user's code, the period key and the wall-clock ms. User ids and
 * attribute values are stored once in dictionaries; rows hold integer codes. 10 million events take
 * about 16 bytes each plus 4 per attribute column.
 */
import { TidemarkError, showValue } from '../errors.js';
import { periodKeyer, type PeriodScheme } from '../periods/calendar.js';
import { ZoneClock } from '../periods/zone.js';
import type { Rules } from '../rules/schema.js';
import { parseTimestamp, parseTimestampBytes } from './timestamp.js';
import { GrowableFloat64, GrowableInt32, ownCopy } from './growable.js';
import { IdDictionary, type DictionaryBytes } from './idDictionary.js';
import { Extremes, type ExtremeRow } from './extremes.js';
import { DetailColumns, type EventDetail } from './detail.js';
import { blankBytes } from './text.js';

const DAY = 86_400_000;
const MIN_MS = Date.UTC(1900, 0, 1);
const MAX_MS = Date.UTC(2200, 0, 1);

function inRange(wall: number): number | undefined {
  return wall >= MIN_MS && wall < MAX_MS ? wall : undefined;
}

/** The code of `s` through a string cache in front of a byte dictionary (a cache holds at most 100,000 strings). */
function cached(cache: Map<string, number>, s: string, d: IdDictionary): number {
  let c = cache.get(s);
  if (c === undefined) {
    c = d.code(s);
    if (cache.size < 100_000) cache.set(ownCopy(s), c);
  }
  return c;
}

/** UTF-8 text of `b[s, e)`: a dictionary's new value (decoded once, when first seen). */
export function utf8Text(b: Uint8Array, s: number, e: number): string {
  return Buffer.from(b.buffer, b.byteOffset + s, e - s).toString('utf8');
}

/** Why a row was rejected. */
export type RejectReason =
  | 'missing user id'
  | 'bad user id'
  | 'bad timestamp'
  | 'missing event name'
  | 'wrong number of fields'
  | 'not valid JSON'
  | 'unclosed quote'
  | 'stray quote'
  | 'invalid UTF-8';

/**
 * Where every physical line of the input went (a line ends with LF or CRLF; a last line without one
 * counts). read = header + blank + records + rejected, always: a record with a quoted line break
 * spans several lines, and the lines a stray quote swallowed are counted where they went.
 */
export interface LineAccount {
  read: number;
  /** Header lines (CSV: one a file, more when a header name holds a line break). */
  header: number;
  blank: number;
  /** Lines of records that were read as rows and not rejected (used, not key events, after --to…). */
  records: number;
  /** Lines of rejected records. */
  rejected: number;
}

/** Where every input row went. read = used + notKeyEvent + afterRange + partial + Σ rejected. */
export interface RowAccount {
  read: number;
  used: number;
  notKeyEvent: number;
  afterRange: number;
  /** Rows of an incomplete last period that the engine left out (RangeOptions.partial 'drop'). */
  partial: number;
  rejected: Partial<Record<RejectReason, number>>;
  lines: LineAccount;
}

export interface AttributeColumn {
  name: string;
  /** Per row: index into `values`. */
  codes: Int32Array;
  values: string[];
}

export interface EventLog {
  /** Number of used event rows. */
  size: number;
  /** Per row: index into `users`. */
  user: Int32Array;
  /** Per row: period key (see periods/calendar.ts). */
  period: Int32Array;
  /**
   * Per row: wall-clock ms in the rules' zone. Empty in a log read with `waistOnly` (then the latest
   * row's wall clock is `extremes.latest[0]`).
   */
  wallMs: Float64Array;
  users: string[];
  /**
   * Number of user codes, when the log knows it without its ids (a log from {@link EventLogBuilder.build}
   * decodes `users` only when they are read, and the engine's counts need only this number); read
   * it through {@link userCount}.
   */
  userCount?: number;
  /**
   * The first and last period keys of the rows, when known with no pass over them: a log from
   * {@link EventLogBuilder.build} (without detail) takes them from its earliest and latest rows, since
   * a row's period key grows with its wall clock.
   */
  keyRange?: { min: number; max: number };
  attributes: AttributeColumn[];
  rows: RowAccount;
  scheme: PeriodScheme;
  /** The source file names, for messages. */
  files: string[];
  /** Rows read per event name (key events and others), for the report's data section. */
  eventNames: Map<string, number>;
  /** The earliest and latest used rows, with their lines (see extremes.ts). */
  extremes: Extremes;
  /**
   * Per-row detail, only when read with `detail: true` (detail.ts). Such a log also holds the rows
   * that are not key events (flagged in `detail.key`); pass it through {@link keyEventsOnly} before
   * the engine.
   */
  detail?: EventDetail;
}

/**
 * Where a row came from: a number that the current file's line resolver turns into a 1-based line.
 * Both readers pass the physical line the record starts on, so the resolver is the identity.
 */
export type LineRef = number;

export interface BuilderOptions {
  rules: Rules;
  /** Skip and count bad rows instead of stopping at the first. */
  skipBadRows: boolean;
  /** Drop (and count) events in periods after this key. */
  toKey?: number;
  /** Keep per-row detail and the rows that are not key events (detail.ts); off by default. */
  detail?: boolean;
  /**
   * Keep per row only what the waist needs without `--by`: the user and period columns. The wall-clock
   * column and the attribute columns' per-row codes stay empty (attribute values are still coded, so
   * their counts are known). Fresh memory is the costly part of filling columns (measured on the
   * benchmark machine: a first write to a page costs about 60 times a later one), and these are 12 of
   * a row's 20 bytes with one attribute. Off by default; not with `detail`.
   */
  waistOnly?: boolean;
}

/** An extreme row as data (its file and line resolver are the merging builder's). */
export interface PartialExtreme {
  wallMs: number;
  text: string;
  ref: LineRef;
}

/** A builder's rows and accounts as transferable data ({@link EventLogBuilder.toPartial}). */
export interface PartialLog {
  user: Int32Array;
  period: Int32Array;
  wall: Float64Array;
  attrNames: string[];
  attrs: Int32Array[];
  users: DictionaryBytes;
  attrValues: DictionaryBytes[];
  events: DictionaryBytes;
  eventRows: Int32Array;
  rows: RowAccount;
  earliest: PartialExtreme[];
  latest: PartialExtreme[];
}

/** Accumulates rows into an {@link EventLog}. */
export class EventLogBuilder {
  readonly rows: RowAccount = { read: 0, used: 0, notKeyEvent: 0, afterRange: 0, partial: 0, rejected: {}, lines: { read: 0, header: 0, blank: 0, records: 0, rejected: 0 } };
  private readonly user = new GrowableInt32();
  private readonly period = new GrowableInt32();
  private readonly wall = new GrowableFloat64();
  private readonly users = new IdDictionary();
  private attrNames: string[] = [];
  private attrCodes: GrowableInt32[] = [];
  private attrDicts: IdDictionary[] = [];
  /** String → code caches in front of the byte dictionaries, for rows given as strings (NDJSON, Parquet). */
  private attrCaches: Map<string, number>[] = [];
  private readonly eventCache = new Map<string, number>();
  private readonly clock: ZoneClock;
  private readonly keyEvents: Set<string> | undefined;
  private readonly scheme: PeriodScheme;
  private readonly keyOfDay: (day: number) => number;
  private readonly files: string[] = [];
  /** Event names by their bytes, rows read per name, and whether each is a key event (1) or not (0). */
  private readonly events = new IdDictionary();
  private eventRows: number[] = [];
  private eventIsKey: number[] = [];
  private readonly extremes = new Extremes();
  private readonly detail: DetailColumns | undefined;
  /** Whether the wall-clock and attribute columns are filled (not {@link BuilderOptions.waistOnly}). */
  private readonly allColumns: boolean;

  constructor(private readonly opts: BuilderOptions) {
    this.allColumns = !opts.waistOnly;
    this.clock = new ZoneClock(opts.rules.timezone);
    this.keyEvents = opts.rules.activity.keyEvents ? new Set(opts.rules.activity.keyEvents) : undefined;
    this.scheme = { grain: opts.rules.grain, weekStart: opts.rules.weekStart };
    this.keyOfDay = periodKeyer(this.scheme);
    this.detail = opts.detail ? new DetailColumns() : undefined;
  }

  /** For the current file: slots[a] is the position of the log's a-th attribute among the file's, or -1. */
  private slots: number[] = [];
  private lineOf: (ref: LineRef) => number = (ref) => ref;

  /**
   * Declare the attribute columns of the next file (extra columns beyond user, timestamp, event),
   * and how its row references become line numbers.
   */
  startFile(file: string, names: string[], lineOf: (ref: LineRef) => number = (ref) => ref): void {
    this.files.push(file);
    this.detail?.startFile(this.user.length);
    this.lineOf = lineOf;
    for (const n of names) {
      if (!this.attrNames.includes(n)) {
        this.attrNames.push(n);
        const g = new GrowableInt32();
        const d = new IdDictionary();
        d.code(''); // code 0: no value
        if (this.allColumns) g.pushRepeated(0, this.user.length);
        this.attrCodes.push(g);
        this.attrDicts.push(d);
        this.attrCaches.push(new Map());
      }
    }
    this.slots = this.attrNames.map((n) => names.indexOf(n));
  }

  /**
   * Room for about `rows` more rows (a reader's estimate from the file's size): the columns are
   * allocated once at that size instead of doubled as they fill (each doubling allocated and copied
   * every column: a tenth of a 10M-row read). Only an allocation; a wrong estimate costs nothing else.
   * Call after {@link startFile}.
   */
  expectRows(rows: number): void {
    const n = this.user.length + Math.max(0, Math.floor(rows));
    this.user.ensure(n);
    this.period.ensure(n);
    if (!this.allColumns) return;
    this.wall.ensure(n);
    for (const g of this.attrCodes) g.ensure(n);
  }

  /** Record a bad row spanning `lines` physical lines: throw by default, count when skipping. */
  reject(reason: RejectReason, file: string, line: LineRef, column: string | undefined, value: string | undefined, hint?: string, lines = 1): void {
    this.rows.read++;
    this.rows.lines.rejected += lines;
    if (!this.opts.skipBadRows) {
      const shown = value === undefined ? '' : `: '${showValue(value)}'`;
      throw new TidemarkError('EVENTS_BAD_ROW', `${reason}${shown}`, { file, line: this.lineOf(line), column },
        hint ?? 'Fix the row, or pass --skip-bad-rows to skip and count such rows');
    }
    this.rows.rejected[reason] = (this.rows.rejected[reason] ?? 0) + 1;
  }

  /**
   * The code of a user id already seen, found from its UTF-8 bytes `b[s, e)` with no string made, or
   * -1. A reader passes the code to {@link add} in place of the id.
   */
  knownUser(b: Uint8Array, s: number, e: number): number {
    return this.users.find(b, s, e);
  }

  /**
   * Add one row spanning `lines` physical lines. `userId` is the id, or the code {@link knownUser}
   * gave for it; `attrs` holds the values of the attribute columns named in {@link startFile}, in that
   * order (the array may be reused by the caller).
   */
  add(file: string, line: LineRef, userId: string | number, ts: string, event: string | undefined, attrs: readonly string[], lines = 1): void {
    this.addTimed(file, line, userId, parseTimestamp(ts, this.clock), ts, event, attrs, lines);
  }

  /**
   * {@link add} with the timestamp already read: `wall` is its wall-clock ms, or undefined when it is no
   * valid timestamp; `ts` is its text as shown in messages (made only when needed).
   */
  addTimed(file: string, line: LineRef, userId: string | number, wall: number | undefined, ts: string | (() => string), event: string | undefined, attrs: readonly string[], lines = 1): void {
    const cols = this.opts.rules.columns;
    if (typeof userId === 'string' && userId.trim() === '') return this.reject('missing user id', file, line, cols.user, userId, undefined, lines);
    if (wall === undefined) {
      return this.reject('bad timestamp', file, line, cols.timestamp, typeof ts === 'string' ? ts : ts(), 'Use ISO 8601 (2026-05-04T18:30:00Z) or epoch seconds/milliseconds, years 1900-2199, or pass --skip-bad-rows', lines);
    }
    const ev = event === undefined ? -1 : this.countEvent(cached(this.eventCache, event, this.events));
    let isKey = true;
    if (this.keyEvents) {
      if (event === undefined || event === '') return this.reject('missing event name', file, line, cols.event, event ?? '', undefined, lines);
      if (!this.eventIsKey[ev]) {
        if (!this.detail) return this.notKey(lines);
        isKey = false; // detail: kept and flagged, counted as not a key event wherever it falls
      }
    }
    const key = this.keyOfDay(Math.floor(wall / DAY));
    this.rows.read++;
    this.rows.lines.records += lines;
    if (!isKey) this.rows.notKeyEvent++;
    if (this.opts.toKey !== undefined && key > this.opts.toKey) {
      if (isKey) this.rows.afterRange++;
      return;
    }
    if (isKey) {
      this.rows.used++;
      if (this.extremes.wants(wall)) this.extremes.add(wall, typeof ts === 'string' ? ts : ts(), file, line, this.lineOf);
    }
    this.detail?.add(event, isKey, typeof ts === 'string' ? ts : ts(), this.lineOf(line));
    this.user.push(typeof userId === 'number' ? userId : this.users.code(userId));
    this.period.push(key);
    if (this.allColumns) this.wall.push(wall);
    for (let a = 0; a < this.attrCodes.length; a++) {
      const pos = this.slots[a];
      const code = pos >= 0 ? cached(this.attrCaches[a], attrs[pos] ?? '', this.attrDicts[a]) : 0;
      if (this.allColumns) this.attrCodes[a].push(code);
    }
  }

  /** Wall-clock ms of an instant given as ms since the epoch, or undefined outside years 1900–2199. */
  instantWall(ms: number): number | undefined {
    return inRange(Number.isFinite(ms) ? this.clock.wallMs(Math.floor(ms)) : NaN);
  }

  /** Wall-clock ms given directly (a local date-time or date), or undefined outside years 1900–2199. */
  localWall(ms: number): number | undefined {
    return inRange(Math.floor(ms));
  }

  /** Wall-clock ms of an epoch number by the CSV rule: milliseconds when |v| ≥ 1e11, else seconds. */
  epochWall(v: number): number | undefined {
    return this.instantWall(Math.abs(v) >= 1e11 ? v : v * 1000);
  }

  /** The code of a user id already given a code, or -1. */
  userCodeOf(id: string): number {
    const b = Buffer.from(id, 'utf8');
    return this.users.find(b, 0, b.length);
  }

  /** Count a row of event code `ev` (a new code learns whether it is a key event); returns `ev`. */
  private countEvent(ev: number): number {
    if (ev === this.eventRows.length) {
      this.eventRows.push(0);
      this.eventIsKey.push(!this.keyEvents || this.keyEvents.has(this.events.values[ev]) ? 1 : 0);
    }
    this.eventRows[ev]++;
    return ev;
  }

  private notKey(lines: number): void {
    this.rows.read++;
    this.rows.lines.records += lines;
    this.rows.notKeyEvent++;
  }

  /**
   * {@link add} for a row whose fields are byte ranges `b[starts[k], ends[k])` (the CSV reader's hot
   * path: no string is made for a known user, a timestamp in a common form, a known event name or
   * attribute value). The fields must be well-formed UTF-8 with nothing to unescape. `user`, `ts` and
   * `event` are field positions (`event` -1 when the file has none); `attrFields[j]` is the field of the
   * file's j-th attribute (as named in {@link startFile}). Same checks, codes and accounting as add.
   */
  addFields(file: string, line: LineRef, lines: number, b: Buffer, starts: Int32Array, ends: Int32Array, user: number, ts: number, event: number, attrFields: readonly number[]): void {
    if (this.detail) {
      // detail keeps each row's texts: the plain path
      const text = (k: number) => utf8Text(b, starts[k], ends[k]);
      return this.add(file, line, text(user), text(ts), event >= 0 ? text(event) : undefined, attrFields.map((f) => (f >= 0 ? text(f) : '')), lines);
    }
    const us = starts[user], ue = ends[user];
    const known = this.users.find(b, us, ue);
    if (known < 0 && blankBytes(b, us, ue)) return this.reject('missing user id', file, line, this.opts.rules.columns.user, utf8Text(b, us, ue), undefined, lines);
    const ts0 = starts[ts], ts1 = ends[ts];
    let wall = parseTimestampBytes(b, ts0, ts1, this.clock);
    let tsText: string | undefined;
    if (wall !== wall) {
      tsText = utf8Text(b, ts0, ts1);
      const parsed = parseTimestamp(tsText, this.clock);
      if (parsed === undefined) {
        return this.reject('bad timestamp', file, line, this.opts.rules.columns.timestamp, tsText, 'Use ISO 8601 (2026-05-04T18:30:00Z) or epoch seconds/milliseconds, years 1900-2199, or pass --skip-bad-rows', lines);
      }
      wall = parsed;
    }
    if (event >= 0) {
      const es = starts[event], ee = ends[event];
      const ev = this.countEvent(this.events.codeBytes(b, es, ee));
      if (this.keyEvents) {
        if (es === ee) return this.reject('missing event name', file, line, this.opts.rules.columns.event, '', undefined, lines);
        if (!this.eventIsKey[ev]) return this.notKey(lines);
      }
    } else if (this.keyEvents) return this.reject('missing event name', file, line, this.opts.rules.columns.event, '', undefined, lines);
    const key = this.keyOfDay(Math.floor(wall / DAY));
    this.rows.read++;
    this.rows.lines.records += lines;
    if (this.opts.toKey !== undefined && key > this.opts.toKey) {
      this.rows.afterRange++;
      return;
    }
    this.rows.used++;
    if (this.extremes.wants(wall)) this.extremes.add(wall, tsText ?? utf8Text(b, ts0, ts1), file, line, this.lineOf);
    // a new id: stored where its look-up above ended (no other user look-up came between)
    this.user.push(known >= 0 ? known : this.users.addMissed(b, us, ue));
    this.period.push(key);
    if (this.allColumns) this.wall.push(wall);
    for (let a = 0; a < this.attrCodes.length; a++) {
      const pos = this.slots[a];
      const f = pos >= 0 ? attrFields[pos] : -1;
      const code = f >= 0 ? this.attrDicts[a].codeBytes(b, starts[f], ends[f]) : 0;
      if (this.allColumns) this.attrCodes[a].push(code);
    }
  }

  /**
   * Everything read so far, as transferable data, for a reader on another thread that read a later part
   * of the current file: the main builder takes it in with {@link merge}. Lines in it are counted from
   * the part's first line. The columns are views on the builder's own arrays: add nothing after this.
   */
  toPartial(): PartialLog {
    const plain = (r: ExtremeRow): PartialExtreme => ({ wallMs: r.wallMs, text: r.text, ref: r.ref });
    // views, not copies: the worker transfers their buffers (its builder is done with them)
    return {
      user: this.user.view(),
      period: this.period.view(),
      wall: this.wall.view(),
      attrNames: [...this.attrNames],
      attrs: this.attrCodes.map((g) => g.view()),
      users: this.users.toBytes(),
      attrValues: this.attrDicts.map((d) => d.toBytes()),
      events: this.events.toBytes(),
      eventRows: Int32Array.from(this.eventRows),
      rows: this.rows,
      earliest: this.extremes.earliest.map(plain),
      latest: this.extremes.latest.map(plain),
    };
  }

  /**
   * Take in a later part of the current file read by another builder ({@link toPartial}), whose first
   * line is line `lineOffset + 1` of the file: codes are those one reader would have given (values new
   * in the part get the next codes in the part's order), lines become file lines, accounts add up.
   */
  merge(p: PartialLog, file: string, lineOffset: number): void {
    const userMap = this.users.merge(p.users);
    const n = p.user.length;
    this.user.pushMapped(p.user, userMap);
    this.period.pushAll(p.period);
    if (this.allColumns) this.wall.pushAll(p.wall);
    for (let a = 0; a < this.attrNames.length; a++) {
      const j = p.attrNames.indexOf(this.attrNames[a]);
      if (j < 0) {
        if (this.allColumns) this.attrCodes[a].pushRepeated(0, n);
      } else {
        const map = this.attrDicts[a].merge(p.attrValues[j]);
        if (this.allColumns) this.attrCodes[a].pushMapped(p.attrs[j], map);
      }
    }
    const evMap = this.events.merge(p.events);
    for (let c = 0; c < evMap.length; c++) {
      this.countEvent(evMap[c]);
      this.eventRows[evMap[c]] += p.eventRows[c] - 1;
    }
    const r = this.rows, q = p.rows;
    r.read += q.read;
    r.used += q.used;
    r.notKeyEvent += q.notKeyEvent;
    r.afterRange += q.afterRange;
    r.partial += q.partial;
    for (const [reason, k] of Object.entries(q.rejected) as [RejectReason, number][]) r.rejected[reason] = (r.rejected[reason] ?? 0) + k;
    r.lines.read += q.lines.read;
    r.lines.header += q.lines.header;
    r.lines.blank += q.lines.blank;
    r.lines.records += q.lines.records;
    r.lines.rejected += q.lines.rejected;
    const lineOf = this.lineOf;
    const row = (x: PartialExtreme): ExtremeRow => ({ wallMs: x.wallMs, text: x.text, file, ref: x.ref + lineOffset, lineOf });
    this.extremes.merge(p.earliest.map(row), p.latest.map(row));
  }

  /** A blank line (not a row). */
  blank(): void {
    this.rows.lines.blank++;
  }

  /** The current file's header took `lines` physical lines. */
  header(lines: number): void {
    this.rows.lines.header += lines;
  }

  /** The current file ended after `lines` physical lines. */
  endFile(lines: number): void {
    this.rows.lines.read += lines;
  }

  build(): EventLog {
    const users = this.users;
    const { earliest, latest } = this.extremes;
    const keyOf = (wall: number) => this.keyOfDay(Math.floor(wall / DAY));
    const keyRange = !this.detail && this.user.length > 0 && earliest.length > 0 ? { min: keyOf(earliest[0].wallMs), max: keyOf(latest[0].wallMs) } : undefined;
    return {
      size: this.user.length,
      user: this.user.view(),
      period: this.period.view(),
      wallMs: this.wall.view(),
      // the ids are decoded when first read (per-user outputs, --by): flows and the waist need only their number
      get users() {
        return users.values;
      },
      userCount: users.size,
      ...(keyRange ? { keyRange } : {}),
      attributes: this.attrNames.map((name, i) => ({ name, codes: this.attrCodes[i].view(), values: this.attrDicts[i].values })),
      rows: this.rows,
      scheme: this.scheme,
      files: this.files,
      eventNames: new Map(this.events.values.map((name, c) => [name, this.eventRows[c]])),
      extremes: this.extremes,
      ...(this.detail ? { detail: this.detail.build() } : {}),
    };
  }
}

/** Number of user codes of a log (its ids are not decoded for it). */
export function userCount(log: EventLog): number {
  return log.userCount ?? log.users.length;
}

/**
 * The key-event rows of a log read with detail, as a log without detail, for the engine (which
 * counts every row as activity). A log without detail, or whose rows are all key events, is returned
 * as it is. One pass; copies the columns only when some row is not a key event.
 */
export function keyEventsOnly(log: EventLog): EventLog {
  const d = log.detail;
  if (!d || d.keyRows === log.size) return log;
  const n = d.keyRows;
  const user = new Int32Array(n), period = new Int32Array(n), wallMs = new Float64Array(n);
  const attrs = log.attributes.map(() => new Int32Array(n));
  for (let i = 0, j = 0; i < log.size; i++) {
    if (!d.key[i]) continue;
    user[j] = log.user[i];
    period[j] = log.period[i];
    wallMs[j] = log.wallMs[i];
    for (let a = 0; a < attrs.length; a++) attrs[a][j] = log.attributes[a].codes[i];
    j++;
  }
  return { ...log, size: n, user, period, wallMs, attributes: log.attributes.map((a, k) => ({ ...a, codes: attrs[k] })), detail: undefined };
}

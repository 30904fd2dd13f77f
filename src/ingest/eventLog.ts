/**
 * The in-memory event log: columnar, dictionary-encoded.
 *
 * One row per used event: the user's code, the period key and the wall-clock ms. User ids and
 * attribute values are stored once in dictionaries; rows hold integer codes. 10 million events take
 * about 16 bytes each plus 4 per attribute column.
 */
import { TidemarkError, showValue } from '../errors.js';
import { periodKeyOfDay, type PeriodScheme } from '../periods/calendar.js';
import { ZoneClock } from '../periods/zone.js';
import type { Rules } from '../rules/schema.js';
import { parseTimestamp } from './timestamp.js';
import { Dictionary, GrowableFloat64, GrowableInt32, ownCopy } from './growable.js';
import { IdDictionary } from './idDictionary.js';
import { Extremes } from './extremes.js';
import { DetailColumns, type EventDetail } from './detail.js';

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
  /** Per row: wall-clock ms in the rules' zone. */
  wallMs: Float64Array;
  users: string[];
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
  private attrDicts: Dictionary[] = [];
  private readonly clock: ZoneClock;
  private readonly keyEvents: Set<string> | undefined;
  private readonly scheme: PeriodScheme;
  private readonly files: string[] = [];
  private readonly eventNames = new Map<string, { n: number }>();
  private readonly extremes = new Extremes();
  private readonly detail: DetailColumns | undefined;

  constructor(private readonly opts: BuilderOptions) {
    this.clock = new ZoneClock(opts.rules.timezone);
    this.keyEvents = opts.rules.activity.keyEvents ? new Set(opts.rules.activity.keyEvents) : undefined;
    this.scheme = { grain: opts.rules.grain, weekStart: opts.rules.weekStart };
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
        const d = new Dictionary();
        d.code(''); // code 0: no value
        for (let i = 0; i < this.user.length; i++) g.push(0);
        this.attrCodes.push(g);
        this.attrDicts.push(d);
      }
    }
    this.slots = this.attrNames.map((n) => names.indexOf(n));
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
    const cols = this.opts.rules.columns;
    if (typeof userId === 'string' && userId.trim() === '') return this.reject('missing user id', file, line, cols.user, userId, undefined, lines);
    const wall = parseTimestamp(ts, this.clock);
    if (wall === undefined) {
      return this.reject('bad timestamp', file, line, cols.timestamp, ts, 'Use ISO 8601 (2026-05-04T18:30:00Z) or epoch seconds/milliseconds, years 1900-2199, or pass --skip-bad-rows', lines);
    }
    if (event !== undefined) {
      const seen = this.eventNames.get(event);
      if (seen) seen.n++;
      else this.eventNames.set(ownCopy(event), { n: 1 });
    }
    let isKey = true;
    if (this.keyEvents) {
      if (event === undefined || event === '') return this.reject('missing event name', file, line, cols.event, event ?? '', undefined, lines);
      if (!this.keyEvents.has(event)) {
        if (!this.detail) {
          this.rows.read++;
          this.rows.lines.records += lines;
          this.rows.notKeyEvent++;
          return;
        }
        isKey = false; // detail: kept and flagged, counted as not a key event wherever it falls
      }
    }
    const key = periodKeyOfDay(Math.floor(wall / 86_400_000), this.scheme);
    this.rows.read++;
    this.rows.lines.records += lines;
    if (!isKey) this.rows.notKeyEvent++;
    if (this.opts.toKey !== undefined && key > this.opts.toKey) {
      if (isKey) this.rows.afterRange++;
      return;
    }
    if (isKey) {
      this.rows.used++;
      this.extremes.add(wall, ts, file, line, this.lineOf);
    }
    this.detail?.add(event, isKey, ts, this.lineOf(line));
    this.user.push(typeof userId === 'number' ? userId : this.users.code(userId));
    this.period.push(key);
    this.wall.push(wall);
    for (let a = 0; a < this.attrCodes.length; a++) {
      const pos = this.slots[a];
      this.attrCodes[a].push(pos >= 0 ? this.attrDicts[a].code(attrs[pos] ?? '') : 0);
    }
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
    return {
      size: this.user.length,
      user: this.user.view(),
      period: this.period.view(),
      wallMs: this.wall.view(),
      users: this.users.values,
      attributes: this.attrNames.map((name, i) => ({ name, codes: this.attrCodes[i].view(), values: this.attrDicts[i].values })),
      rows: this.rows,
      scheme: this.scheme,
      files: this.files,
      eventNames: new Map([...this.eventNames].map(([name, c]) => [name, c.n])),
      extremes: this.extremes,
      ...(this.detail ? { detail: this.detail.build() } : {}),
    };
  }
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

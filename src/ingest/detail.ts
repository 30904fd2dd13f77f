/**
 * Per-row detail kept by an event log read with `detail: true` (off by default): the event name's
 * code, whether the row is a key event, how its timestamp was written, and its line. The behaviour
 * analyses (inspect, early signals, habits, RFM segments, the grain advisor) need them; the lifecycle
 * engine does not, so the default path keeps none of them.
 *
 * About 14 bytes a row. Rows that are not key events are kept too (flagged), so the analyses can see
 * every event a user did; {@link keyEventsOnly} gives the engine the key rows alone.
 */
import { Dictionary, GrowableFloat64, GrowableInt32 } from './growable.js';

/** How a timestamp was written: local time (no offset), an instant at offset zero (`Z`, `+00:00`, epoch), or another offset. */
export const TS_LOCAL = 0;
export const TS_ZERO_OFFSET = 1;
export const TS_OTHER_OFFSET = 2;

const EPOCH = /^\s*[+-]?\d+(?:\.\d+)?\s*$/;
const ZERO = /(?:[Zz]|[+-]00(?::?00)?)\s*$/;
const OFFSET = /[Tt ]?\d{2}(?::?\d{2})?(?::?\d{2}(?:[.,]\d+)?)?\s*[+-]\d{2}(?::?\d{2})?\s*$/;

/**
 * The form of a timestamp text already accepted by the parser (timestamp.ts).
 * @example timestampForm('2026-05-04T18:30:00Z') // TS_ZERO_OFFSET; timestampForm('2026-05-04 18:30') // TS_LOCAL
 */
export function timestampForm(text: string): number {
  if (EPOCH.test(text) || ZERO.test(text)) return TS_ZERO_OFFSET;
  // a date alone ends in "-DD", which must not read as an offset: an offset follows a time
  return /\d[Tt ]\d/.test(text) && OFFSET.test(text) ? TS_OTHER_OFFSET : TS_LOCAL;
}

/** The detail columns of an {@link EventLog} read with `detail: true`. Row i of each matches row i of the log. */
export interface EventDetail {
  /** Per row: index into `names` (0: no event column or an empty name). */
  event: Int32Array;
  /** Event names; names[0] is ''. */
  names: string[];
  /** Per row: 1 when the row is a key event (counts toward activity), 0 otherwise. */
  key: Uint8Array;
  /** Per row: TS_LOCAL, TS_ZERO_OFFSET or TS_OTHER_OFFSET. */
  tsForm: Uint8Array;
  /** Per row: the physical line the row starts on, in its file. */
  line: Float64Array;
  /** The row index where each file of `EventLog.files` starts. */
  fileStart: number[];
  /** Rows that are key events. */
  keyRows: number;
}

/** Accumulates the detail columns beside an EventLogBuilder. */
export class DetailColumns {
  private readonly event = new GrowableInt32();
  private readonly names = new Dictionary();
  private readonly flags = new GrowableInt32();
  private readonly line = new GrowableFloat64();
  private readonly fileStart: number[] = [];
  private keyRows = 0;

  constructor() {
    this.names.code('');
  }

  /** A new file starts at row `row`. */
  startFile(row: number): void {
    this.fileStart.push(row);
  }

  add(event: string | undefined, key: boolean, ts: string, line: number): void {
    this.event.push(event === undefined ? 0 : this.names.code(event));
    this.flags.push((key ? 1 : 0) | (timestampForm(ts) << 1));
    this.line.push(line);
    if (key) this.keyRows++;
  }

  build(): EventDetail {
    const f = this.flags.view();
    const key = new Uint8Array(f.length), tsForm = new Uint8Array(f.length);
    for (let i = 0; i < f.length; i++) {
      key[i] = f[i] & 1;
      tsForm[i] = f[i] >> 1;
    }
    return { event: this.event.view(), names: this.names.values, key, tsForm, line: this.line.view(), fileStart: this.fileStart, keyRows: this.keyRows };
  }
}

/** The file and line of row `i` of a log read with detail. */
export function rowPlace(files: readonly string[], d: EventDetail, i: number): { file: string; line: number } {
  let f = 0;
  while (f + 1 < d.fileStart.length && d.fileStart[f + 1] <= i) f++;
  return { file: files[f] ?? '', line: d.line[i] };
}

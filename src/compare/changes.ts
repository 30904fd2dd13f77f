/**
 * How a classification changes between two rule sets: the user-periods by (state under A, state under
 * B), over the user-periods present under both, joined on the user id and the period label.
 *
 * Both classifications arrive as engine streams (`ClassifiedSink`: sorted by user id in code-unit
 * order, then period). A is kept compactly (one 32-bit number a row: the period's day number and the
 * state's code; the user ids once); B is joined against it as it streams, so B is never held. A
 * user-period present under one rule set only (a user not yet active under the other, say because the
 * other counts other key events) is counted apart, by its state, under `onlyA` or `onlyB`.
 */
import type { ClassifiedSink } from '../engines/types.js';
import { GrowableInt32 } from '../ingest/growable.js';

/** Codes per state in a packed row; a rules set has at most 7 states (5 base states, 2 split). */
const STATE_CODES = 64;

/** Added to day numbers so that periods back to 1900 (day −25,567) pack as positive numbers. */
const DAY_BASE = 40_000;

/** The day number (days since 1970-01-01, plus {@link DAY_BASE}) of a period label `YYYY-MM-DD`. */
function dayOf(label: string): number {
  return Date.parse(`${label}T00:00:00Z`) / 86_400_000 + DAY_BASE;
}

/** State codes by name, in the order first seen (a few states). */
class Codes {
  readonly names: string[] = [];
  private readonly map = new Map<string, number>();
  code(name: string): number {
    let c = this.map.get(name);
    if (c === undefined) {
      c = this.names.length;
      if (c >= STATE_CODES) throw new Error(`more than ${STATE_CODES} states in a classification`);
      this.names.push(name);
      this.map.set(name, c);
    }
    return c;
  }
}

/** Day numbers of period labels, cached (a run has few periods). */
class Days {
  private readonly map = new Map<string, number>();
  of(label: string): number {
    let d = this.map.get(label);
    if (d === undefined) this.map.set(label, (d = dayOf(label)));
    return d;
  }
}

/** One rule set's classification, kept compactly: users in stream order, one packed row a user-period. */
export class StoredClassification implements ClassifiedSink {
  readonly users: string[] = [];
  /** Row index of each user's first row; one more entry at the end once {@link end} is called. */
  readonly starts: number[] = [];
  readonly states = new Codes();
  private readonly days = new Days();
  private readonly packed = new GrowableInt32();
  private rows?: Int32Array;

  row(user: string, period: string, state: string): void {
    const last = this.users[this.users.length - 1];
    if (user !== last) {
      if (last !== undefined && user < last) throw new Error('the classification stream is not sorted by user');
      this.users.push(user);
      this.starts.push(this.packed.length);
    }
    this.packed.push(this.days.of(period) * STATE_CODES + this.states.code(state));
  }

  /** The rows, once the stream has ended. */
  end(): Int32Array {
    if (!this.rows) {
      this.rows = this.packed.view();
      this.starts.push(this.rows.length);
    }
    return this.rows;
  }
}

export interface ChangeCount {
  /** State under A. */
  from: string;
  /** State under B. */
  to: string;
  /** User-periods in `from` under A and `to` under B. */
  count: number;
}

export interface ClassificationChanges {
  /** Every (A state, B state) pair with a user-period, over the user-periods present under both. */
  changes: ChangeCount[];
  /** User-periods present under both. */
  compared: number;
  /** Of those, user-periods whose state differs. */
  changed: number;
  /** User-periods present under A only, by their state under A. */
  onlyA: { state: string; count: number }[];
  /** User-periods present under B only, by their state under B. */
  onlyB: { state: string; count: number }[];
}

/**
 * A sink for B's stream that joins it against A's stored classification as it arrives. Call
 * {@link result} once the stream has ended.
 */
export class ChangeCounter implements ClassifiedSink {
  private readonly rows: Int32Array;
  private readonly statesB = new Codes();
  private readonly days = new Days();
  private readonly pairs = new Float64Array(STATE_CODES * STATE_CODES);
  private readonly onlyA = new Float64Array(STATE_CODES);
  private readonly onlyB = new Float64Array(STATE_CODES);
  /** The next A user not yet passed, and the cursor and end of the current user's A rows (cursor = end: none). */
  private nextUser = 0;
  private cursor = 0;
  private stop = 0;
  private current: string | undefined;

  constructor(private readonly a: StoredClassification) {
    this.rows = a.end();
  }

  row(user: string, period: string, state: string): void {
    if (user !== this.current) {
      if (this.current !== undefined && user < this.current) throw new Error('the classification stream is not sorted by user');
      this.flushUser();
      this.current = user;
      const { users, starts } = this.a;
      while (this.nextUser < users.length && users[this.nextUser] < user) {
        this.countOnlyA(starts[this.nextUser], starts[this.nextUser + 1]);
        this.nextUser++;
      }
      if (this.nextUser < users.length && users[this.nextUser] === user) {
        this.cursor = starts[this.nextUser];
        this.stop = starts[this.nextUser + 1];
        this.nextUser++;
      } else this.cursor = this.stop = 0;
    }
    const day = this.days.of(period);
    const b = this.statesB.code(state);
    while (this.cursor < this.stop && Math.floor(this.rows[this.cursor] / STATE_CODES) < day) this.onlyA[this.rows[this.cursor++] % STATE_CODES]++;
    if (this.cursor < this.stop && Math.floor(this.rows[this.cursor] / STATE_CODES) === day) {
      this.pairs[(this.rows[this.cursor++] % STATE_CODES) * STATE_CODES + b]++;
    } else this.onlyB[b]++;
  }

  private flushUser(): void {
    this.countOnlyA(this.cursor, this.stop);
    this.cursor = this.stop = 0;
  }

  private countOnlyA(from: number, to: number): void {
    for (let r = from; r < to; r++) this.onlyA[this.rows[r] % STATE_CODES]++;
  }

  /**
   * The counts, with the states of each side in the order given (the states of each rule set, from its
   * waist); a state seen in a stream but missing from its order comes after, as first seen.
   */
  result(orderA: readonly string[], orderB: readonly string[]): ClassificationChanges {
    this.flushUser();
    const { users, starts } = this.a;
    for (; this.nextUser < users.length; this.nextUser++) this.countOnlyA(starts[this.nextUser], starts[this.nextUser + 1]);
    const namesA = this.a.states.names;
    const namesB = this.statesB.names;
    const sortCodes = (names: readonly string[], order: readonly string[]) =>
      names.map((_, c) => c).sort((x, y) => rank(order, names[x]) - rank(order, names[y]) || x - y);
    const codesA = sortCodes(namesA, orderA);
    const codesB = sortCodes(namesB, orderB);
    const changes: ChangeCount[] = [];
    let compared = 0, changed = 0;
    for (const i of codesA) {
      for (const j of codesB) {
        const count = this.pairs[i * STATE_CODES + j];
        if (count === 0) continue;
        changes.push({ from: namesA[i], to: namesB[j], count });
        compared += count;
        if (namesA[i] !== namesB[j]) changed += count;
      }
    }
    return {
      changes,
      compared,
      changed,
      onlyA: codesA.filter((i) => this.onlyA[i] > 0).map((i) => ({ state: namesA[i], count: this.onlyA[i] })),
      onlyB: codesB.filter((j) => this.onlyB[j] > 0).map((j) => ({ state: namesB[j], count: this.onlyB[j] })),
    };
  }
}

function rank(order: readonly string[], name: string): number {
  const i = order.indexOf(name);
  return i < 0 ? order.length : i;
}

/**
 * Per-user state between updates: what the next period needs to classify each user and extend every
 * waist table by one period, and nothing about earlier periods. Columnar, indexed by a store user
 * number (uid) that never changes once given.
 */

/** "No period" in the period-key columns (keys may be negative: days before 1970). */
export const NO_PERIOD = -2147483648;

/** The per-user columns; `n` users, the arrays may be longer (spare room). */
export class UserState {
  n = 0;
  ids: string[] = [];
  /** Period key of the first active period (NO_PERIOD until the user is first active). */
  first = new Int32Array(0);
  /** Plan code (1 + index into the plan's states) in the latest period; 0 before the first active period. */
  code = new Uint8Array(0);
  /** Plan code in the period before the latest (0: not yet seen then). */
  prevCode = new Uint8Array(0);
  /** Quiet periods in a row, saturating at the lapse limit (the plan's idle count). */
  idle = new Int32Array(0);
  /** Period key of the latest active period. */
  lastActive = new Int32Array(0);
  /** Period key of the first period in the exit state, or NO_PERIOD. */
  firstDormant = new Int32Array(0);
  /** 1 for a user whose state changed since it was loaded (or who is new): what an update writes. */
  dirty = new Uint8Array(0);
  private readonly index = new Map<string, number>();

  /** The uid of an id, or -1. */
  uidOf(id: string): number {
    return this.index.get(id) ?? -1;
  }

  /** Add a user not yet active (first = NO_PERIOD); returns the uid. */
  add(id: string): number {
    if (this.n === this.first.length) this.reserve(Math.max(16, this.n * 2));
    const u = this.n++;
    this.ids.push(id);
    this.index.set(id, u);
    this.first[u] = NO_PERIOD;
    this.code[u] = 0;
    this.prevCode[u] = 0;
    this.idle[u] = 0;
    this.lastActive[u] = NO_PERIOD;
    this.firstDormant[u] = NO_PERIOD;
    this.dirty[u] = 1;
    return u;
  }

  /** Make room for `size` users. */
  reserve(size: number): void {
    if (size <= this.first.length) return;
    const grow = <T extends Int32Array | Uint8Array>(a: T, make: (n: number) => T): T => {
      const b = make(size);
      b.set(a.subarray(0, this.n));
      return b;
    };
    this.first = grow(this.first, (k) => new Int32Array(k));
    this.code = grow(this.code, (k) => new Uint8Array(k));
    this.prevCode = grow(this.prevCode, (k) => new Uint8Array(k));
    this.idle = grow(this.idle, (k) => new Int32Array(k));
    this.lastActive = grow(this.lastActive, (k) => new Int32Array(k));
    this.firstDormant = grow(this.firstDormant, (k) => new Int32Array(k));
    this.dirty = grow(this.dirty, (k) => new Uint8Array(k));
  }

  /** Users that were ever active (every stored user is). */
  activeEver(): number {
    let k = 0;
    for (let u = 0; u < this.n; u++) if (this.first[u] !== NO_PERIOD) k++;
    return k;
  }
}

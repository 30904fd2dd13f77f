/** Append-only typed arrays that double when full: columnar storage without per-row objects. */
type Typed = Int32Array | Float64Array;

class Growable<T extends Typed> {
  protected buf: T;
  length = 0;
  constructor(private readonly make: (n: number) => T) {
    this.buf = make(1024);
  }
  /** Double the storage (push, when full). */
  protected double(): void {
    const next = this.make(this.buf.length * 2);
    next.set(this.buf);
    this.buf = next;
  }
  protected reserve(n: number): void {
    if (this.length + n <= this.buf.length) return;
    let size = this.buf.length * 2;
    while (size < this.length + n) size *= 2;
    const next = this.make(size);
    next.set(this.buf.subarray(0, this.length));
    this.buf = next;
  }
  /** Make room for `n` values in all (exactly that many, once), so that pushes up to it never copy. */
  ensure(n: number): void {
    if (n <= this.buf.length) return;
    const next = this.make(n);
    next.set(this.buf.subarray(0, this.length));
    this.buf = next;
  }
  /** Append every value of `src`. */
  pushAll(src: ArrayLike<number>): void {
    this.reserve(src.length);
    (this.buf as Typed).set(src, this.length);
    this.length += src.length;
  }
  /** Append map[v] for every value v of `src`. */
  pushMapped(src: ArrayLike<number>, map: ArrayLike<number>): void {
    this.reserve(src.length);
    const buf = this.buf;
    let k = this.length;
    for (let i = 0; i < src.length; i++) buf[k++] = map[src[i]];
    this.length = k;
  }
  /** Append `n` copies of `v`. */
  pushRepeated(v: number, n: number): void {
    this.reserve(n);
    this.buf.fill(v, this.length, this.length + n);
    this.length += n;
  }
  /** A copy-free view of the values pushed so far. */
  view(): T {
    return this.buf.subarray(0, this.length) as T;
  }
}

// push is written out in each subclass, not inherited: one shared push would store into both
// Int32Arrays and Float64Arrays, and that polymorphic store was a tenth of a read's profile
export class GrowableInt32 extends Growable<Int32Array> {
  constructor() {
    super((n) => new Int32Array(n));
  }
  push(v: number): void {
    if (this.length === this.buf.length) this.double();
    this.buf[this.length++] = v;
  }
}

export class GrowableFloat64 extends Growable<Float64Array> {
  constructor() {
    super((n) => new Float64Array(n));
  }
  push(v: number): void {
    if (this.length === this.buf.length) this.double();
    this.buf[this.length++] = v;
  }
}

/**
 * A copy of a string that holds no reference to a larger one. The readers slice fields out of a
 * whole decoded chunk; V8 keeps a slice of 13 or more characters as a view on its parent, so a
 * dictionary keeping such a slice would keep the whole chunk (megabytes) alive. Concatenation
 * followed by a slice makes V8 flatten into a fresh string; measured: 60 kept 20-character slices of
 * 4 MiB chunks held 257 MB without it, 6 MB with it.
 */
export function ownCopy(s: string): string {
  return s.length < 13 ? s : `${s} `.slice(0, -1);
}

/** A string dictionary: each distinct string gets the next integer code. */
export class Dictionary {
  readonly values: string[] = [];
  private readonly codes = new Map<string, number>();
  code(s: string): number {
    let c = this.codes.get(s);
    if (c === undefined) {
      const own = ownCopy(s);
      c = this.values.length;
      this.values.push(own);
      this.codes.set(own, c);
    }
    return c;
  }
}

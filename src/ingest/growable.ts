/** Append-only typed arrays that double when full: columnar storage without per-row objects. */
type Typed = Int32Array | Float64Array;

class Growable<T extends Typed> {
  private buf: T;
  length = 0;
  constructor(private readonly make: (n: number) => T) {
    this.buf = make(1024);
  }
  push(v: number): void {
    if (this.length === this.buf.length) {
      const next = this.make(this.buf.length * 2);
      next.set(this.buf);
      this.buf = next;
    }
    this.buf[this.length++] = v;
  }
  /** A copy-free view of the values pushed so far. */
  view(): T {
    return this.buf.subarray(0, this.length) as T;
  }
}

export class GrowableInt32 extends Growable<Int32Array> {
  constructor() {
    super((n) => new Int32Array(n));
  }
}

export class GrowableFloat64 extends Growable<Float64Array> {
  constructor() {
    super((n) => new Float64Array(n));
  }
}

/** A string dictionary: each distinct string gets the next integer code. */
export class Dictionary {
  readonly values: string[] = [];
  private readonly codes = new Map<string, number>();
  code(s: string): number {
    let c = this.codes.get(s);
    if (c === undefined) {
      c = this.values.length;
      this.values.push(s);
      this.codes.set(s, c);
    }
    return c;
  }
}

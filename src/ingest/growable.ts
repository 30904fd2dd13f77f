/** Append-only typed arrays that double when full: columnar storage without per-row objects. */
export class GrowableInt32 {
  private buf = new Int32Array(1024);
  length = 0;
  push(v: number): void {
    if (this.length === this.buf.length) {
      const next = new Int32Array(this.buf.length * 2);
      next.set(this.buf);
      this.buf = next;
    }
    this.buf[this.length++] = v;
  }
  /** A trimmed copy-free view of the values pushed so far. */
  view(): Int32Array {
    return this.buf.subarray(0, this.length);
  }
}

export class GrowableFloat64 {
  private buf = new Float64Array(1024);
  length = 0;
  push(v: number): void {
    if (this.length === this.buf.length) {
      const next = new Float64Array(this.buf.length * 2);
      next.set(this.buf);
      this.buf = next;
    }
    this.buf[this.length++] = v;
  }
  view(): Float64Array {
    return this.buf.subarray(0, this.length);
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

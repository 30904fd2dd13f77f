/**
 * The dictionaries of the readers (user ids, event names, attribute values), found by the value's
 * UTF-8 bytes. With hundreds of thousands of users a string-keyed Map costs a new string and several
 * cache misses a row (measured: 640 ns a row at 500,000 users); this table finds a known value straight
 * from the bytes in the read buffer, with no string made (340 ns), and decodes a value only the first
 * time it is seen. Values given as strings (NDJSON, escaped CSV fields) go through the same table, so
 * every path gives a value the same code.
 *
 * Open addressing with linear probing over [hash, code, arena offset, length] slots (one cache miss
 * finds a slot with what its comparison needs), grown at half full; the hash is a
 * multiplicative byte hash with a per-run random seed, so no crafted set of ids can make the probes
 * long on purpose. A dictionary built elsewhere (a worker thread's share of a file) is merged through
 * {@link DictionaryBytes}: its values' bytes in code order.
 */
import { randomInt } from 'node:crypto';
import { ownCopy } from './growable.js';

/** A dictionary's values as bytes, in code order: value c is `arena[start[c], start[c + 1])`. Transferable between threads. */
export interface DictionaryBytes {
  arena: Uint8Array;
  /** size + 1 offsets. */
  start: Int32Array;
}

export class IdDictionary {
  /** The values, by code. */
  readonly values: string[] = [];
  private slots = new Int32Array(4 * 1024).fill(-1);
  private arena = new Uint8Array(1 << 16);
  private arenaEnd = 0;
  private readonly seed = randomInt(1, 0x7fffffff);

  private hash(b: Uint8Array, s: number, e: number): number {
    let h = this.seed;
    for (let i = s; i < e; i++) {
      h = Math.imul(h ^ b[i], 0x5bd1e995);
      h ^= h >>> 15;
    }
    return h;
  }

  /** Index of the slot holding the value `b[s, e)`, or of the empty slot where it belongs. */
  private slot(b: Uint8Array, s: number, e: number, h: number): number {
    const slots = this.slots;
    const mask = (slots.length >> 2) - 1;
    const len = e - s;
    const arena = this.arena;
    let at = h & mask;
    for (;;) {
      const k = at << 2;
      if (slots[k + 1] < 0) return at;
      if (slots[k] === h && slots[k + 3] === len) {
        const o = slots[k + 2];
        let i = 0;
        while (i < len && arena[o + i] === b[s + i]) i++;
        if (i === len) return at;
      }
      at = (at + 1) & mask;
    }
  }

  /** The code of the value whose UTF-8 bytes are `b[s, e)`, or -1 when it has none yet. */
  find(b: Uint8Array, s: number, e: number): number {
    return this.slots[(this.slot(b, s, e, this.hash(b, s, e)) << 2) + 1];
  }

  /**
   * The code of the value whose UTF-8 bytes are `b[s, e)` (well-formed UTF-8); a new value gets the next
   * code and its text from `text(b, s, e)`, called only then.
   */
  codeBytes(b: Uint8Array, s: number, e: number, text: (b: Uint8Array, s: number, e: number) => string): number {
    const h = this.hash(b, s, e);
    const at = this.slot(b, s, e, h);
    const found = this.slots[(at << 2) + 1];
    return found >= 0 ? found : this.insert(at, h, b, s, e, text(b, s, e));
  }

  /**
   * The code of a value given as a string; a new value gets the next code. The value must be
   * well-formed text (no lone surrogate: the readers refuse those in ids), since its UTF-8 bytes are its key.
   */
  code(id: string): number {
    const bytes = Buffer.from(id, 'utf8');
    const h = this.hash(bytes, 0, bytes.length);
    const at = this.slot(bytes, 0, bytes.length, h);
    const found = this.slots[(at << 2) + 1];
    return found >= 0 ? found : this.insert(at, h, bytes, 0, bytes.length, id);
  }

  private insert(at: number, h: number, b: Uint8Array, s: number, e: number, text: string): number {
    const len = e - s;
    const c = this.values.length;
    this.values.push(ownCopy(text));
    if (this.arenaEnd + len > this.arena.length) {
      const bigger = new Uint8Array(Math.max(this.arena.length * 2, this.arenaEnd + len));
      bigger.set(this.arena.subarray(0, this.arenaEnd));
      this.arena = bigger;
    }
    const k = at << 2;
    this.slots[k] = h;
    this.slots[k + 1] = c;
    this.slots[k + 2] = this.arenaEnd;
    this.slots[k + 3] = len;
    this.arena.set(b.subarray(s, e), this.arenaEnd);
    this.arenaEnd += len;
    if (this.values.length * 2 > this.slots.length >> 2) this.grow();
    return c;
  }

  private grow(): void {
    const old = this.slots;
    const slots = new Int32Array(old.length * 2).fill(-1);
    const mask = (slots.length >> 2) - 1;
    for (let i = 0; i < old.length; i += 4) {
      if (old[i + 1] < 0) continue;
      let at = old[i] & mask;
      while (slots[(at << 2) + 1] >= 0) at = (at + 1) & mask;
      const k = at << 2;
      slots[k] = old[i];
      slots[k + 1] = old[i + 1];
      slots[k + 2] = old[i + 2];
      slots[k + 3] = old[i + 3];
    }
    this.slots = slots;
  }

  /** The values' bytes in code order (copies), to send to another thread. */
  toBytes(): DictionaryBytes {
    const n = this.values.length;
    const start = new Int32Array(n + 1);
    const arena = new Uint8Array(this.arenaEnd);
    const slots = this.slots;
    // the arena holds values in code order already (each new value is appended), so offsets follow from lengths
    for (let k = 0; k < slots.length; k += 4) if (slots[k + 1] >= 0) start[slots[k + 1] + 1] = slots[k + 3];
    for (let c = 0; c < n; c++) start[c + 1] += start[c];
    arena.set(this.arena.subarray(0, this.arenaEnd));
    return { arena, start };
  }

  /**
   * Codes in this dictionary for every value of `other`, in its code order; values new here get the
   * next codes in that order (so merging the dictionaries of a file's consecutive parts gives the codes
   * one reader would have given).
   */
  merge(other: DictionaryBytes, text: (b: Uint8Array, s: number, e: number) => string): Int32Array {
    const n = other.start.length - 1;
    const map = new Int32Array(n);
    for (let c = 0; c < n; c++) map[c] = this.codeBytes(other.arena, other.start[c], other.start[c + 1], text);
    return map;
  }
}

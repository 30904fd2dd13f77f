/**
 * The dictionaries of the readers (user ids, event names, attribute values), found by the value's
 * UTF-8 bytes. With hundreds of thousands of users a string-keyed Map costs a new string and several
 * cache misses a row (measured: 640 ns a row at 500,000 users); this table finds a known value straight
 * from the bytes in the read buffer, with no string made (340 ns), and decodes a value only the first
 * time it is seen. Values given as strings (NDJSON, escaped CSV fields) go through the same table, so
 * every path gives a value the same code.
 *
 * Open addressing with linear probing over 16-byte slots [tag, code, first 4 bytes, next 4 bytes or
 * arena offset] (the tag is the hash with its low byte replaced by the length, 255 for 255 bytes or
 * more): one cache miss finds a slot with what its comparison needs. An id of up to 8 bytes is compared
 * there whole; a longer one keeps its arena offset in the slot's last word and is compared there from
 * its fifth byte. The table is grown at half full (150,000 ids: 8 MB; 32-byte slots made it 16 MB, and
 * a look-up was a cache miss further out). A dictionary of at most 8 values (event names, most
 * attributes) is found in a 16-slot table by length and first word instead, with no hash of the
 * whole value. The hash is a multiplicative hash (of the value a word at a time, then the length) with
 * a per-run random seed, so no crafted set of ids can make the probes long on purpose. A dictionary built elsewhere (a worker thread's share of a file) is merged through
 * {@link DictionaryBytes}: its values' bytes in code order.
 *
 * Values found by their bytes are decoded to strings only when {@link IdDictionary.values} is read, all
 * the new ones at once (ASCII values as pieces of one string made from the arena): a worker thread's
 * dictionary, sent back as bytes, never makes a string, and the reader makes none per new id.
 */
import { isAscii } from 'node:buffer';
import { randomInt } from 'node:crypto';
import { ownCopy } from './growable.js';

/** A dictionary's values as bytes, in code order: value c is `arena[start[c], start[c + 1])`. Transferable between threads. */
export interface DictionaryBytes {
  arena: Uint8Array;
  /** size + 1 offsets. */
  start: Int32Array;
}

/** Values with at most this many distinct entries are found in a 16-slot table by length and first word, with no hash of the whole value. */
const SMALL = 8;
/** Int32s a slot: tag (hash and length), code, the first 4 bytes packed little-endian, then the next 4 (a value of up to 8 bytes) or its arena offset (a longer one). */
const SLOT = 4;
/** Multiplier of the slot index (Fibonacci hashing of the tag xor the first word, both kept in the slot: its top bits pick the slot, and a table grows with no hash of the bytes). */
const GOLD = -0x61c88647;
/** The hash's mixing multiplier. */
const MIX = 0x5bd1e995;

/** Decoding access to a Buffer's bytes (node's own methods, which take no range check object). */
interface SliceBuffer extends Buffer {
  latin1Slice(start: number, end: number): string;
  utf8Slice(start: number, end: number): string;
}

/** The bytes `b[i, min(i + 4, e))` packed little-endian (missing ones zero; 0 when i ≥ e). */
function wordAt(b: Uint8Array, i: number, e: number): number {
  const n = e - i;
  if (n >= 4) return b[i] | (b[i + 1] << 8) | (b[i + 2] << 16) | (b[i + 3] << 24);
  if (n <= 0) return 0;
  return b[i] | (n > 1 ? b[i + 1] << 8 : 0) | (n > 2 ? b[i + 2] << 16 : 0);
}

export class IdDictionary {
  /** Number of values (codes 0 … size − 1). */
  size = 0;
  /** Texts of codes 0 … decoded − 1; the rest are decoded from the arena when {@link values} is read. */
  private readonly texts: string[] = [];
  private decoded = 0;
  /** Arena offset where the value of code `decoded` starts. */
  private decodedEnd = 0;
  /** Byte length of each value, by code (the arena holds the values in code order). */
  private lens = new Int32Array(1024);
  private slots = new Int32Array(SLOT * 1024).fill(-1);
  /** 32 − log2(slots): a slot's index is the top bits of the Fibonacci hash of its tag xor first word. */
  private shift = 22;
  private arena = new Uint8Array(1 << 16);
  private arenaEnd = 0;
  /** The values while there are at most SMALL of them: 16 slots [length (-1 empty), code, first 4 bytes, next 4 bytes or arena offset], by length and first word. */
  private readonly smallTab = new Int32Array(16 * SLOT).fill(-1);
  private readonly seed = randomInt(1, 0x7fffffff);
  /** The tag and the slot's last two words for the last value looked up (set by {@link probe}; w1 is bytes 4–7, for a value of up to 8 bytes). */
  private tag = 0;
  private w0 = 0;
  private w1 = 0;
  /** The empty slot where the value of the last {@link find} that missed belongs, or -1 (see {@link addMissed}). */
  private missAt = -1;

  /** Index of the slot holding the value `b[s, e)`, or of the empty slot where it belongs; sets tag, w0 and w1. */
  private probe(b: Uint8Array, s: number, e: number): number {
    const len = e - s;
    // the value a word at a time (the last one zero-filled), then its length
    const w0 = wordAt(b, s, e), w1 = wordAt(b, s + 4, e);
    let h = Math.imul(this.seed ^ w0, MIX);
    h ^= h >>> 15;
    h = Math.imul(h ^ w1, MIX);
    h ^= h >>> 15;
    for (let i = s + 8; i < e; i += 4) {
      h = Math.imul(h ^ wordAt(b, i, e), MIX);
      h ^= h >>> 15;
    }
    h = Math.imul(h ^ len, MIX);
    h ^= h >>> 13;
    const tag = (h & ~0xff) | (len < 255 ? len : 255);
    this.tag = tag;
    this.w0 = w0;
    this.w1 = w1;
    const slots = this.slots;
    const mask = (slots.length >> 2) - 1;
    let at = Math.imul(tag ^ w0, GOLD) >>> this.shift;
    if (len <= 8) {
      // the whole value is in the slot (the tag's low byte is its length)
      for (;;) {
        const k = at << 2;
        if (slots[k + 1] < 0) return at;
        if (slots[k] === tag && slots[k + 2] === w0 && slots[k + 3] === w1) return at;
        at = (at + 1) & mask;
      }
    }
    const arena = this.arena;
    for (;;) {
      const k = at << 2;
      const c = slots[k + 1];
      if (c < 0) return at;
      if (slots[k] === tag && slots[k + 2] === w0 && (len < 255 || this.lens[c] === len)) {
        const o = slots[k + 3];
        let i = 4;
        while (i < len && arena[o + i] === b[s + i]) i++;
        if (i === len) return at;
      }
      at = (at + 1) & mask;
    }
  }

  /** Index into smallTab of the slot holding `b[s, e)` (length, first word, and w1 / the arena from byte 4), or of the empty slot where it belongs. */
  private smallSlot(b: Uint8Array, s: number, e: number): number {
    const len = e - s;
    const w0 = wordAt(b, s, e);
    const w1 = len <= 8 ? wordAt(b, s + 4, e) : 0;
    const t = this.smallTab;
    let k = (Math.imul(w0 ^ len, GOLD) >>> 28) << 2;
    for (;;) {
      const l = t[k];
      if (l < 0) return k;
      if (l === len && t[k + 2] === w0) {
        if (len <= 8) {
          if (t[k + 3] === w1) return k;
        } else {
          const o = t[k + 3];
          const arena = this.arena;
          let i = 4;
          while (i < len && arena[o + i] === b[s + i]) i++;
          if (i === len) return k;
        }
      }
      k = (k + SLOT) & (16 * SLOT - 1);
    }
  }

  /** The code of a small dictionary's value `b[s, e)`, or -1. */
  private small(b: Uint8Array, s: number, e: number): number {
    return this.smallTab[this.smallSlot(b, s, e) + 1];
  }

  /** The values, by code (decoded here, on first reading, for values found by their bytes). */
  get values(): string[] {
    if (this.decoded < this.size) this.decodeRest();
    return this.texts;
  }

  /** Decode the values not decoded yet from the arena: one latin1 string cut in pieces when they are ASCII, else each as UTF-8. */
  private decodeRest(): void {
    const off = this.decodedEnd;
    const buf = Buffer.from(this.arena.buffer, this.arena.byteOffset, this.arenaEnd) as SliceBuffer;
    const ascii = isAscii(buf.subarray(off, this.arenaEnd));
    const all = ascii ? buf.latin1Slice(off, this.arenaEnd) : '';
    let at = 0;
    for (let c = this.decoded; c < this.size; c++) {
      const len = this.lens[c];
      // pieces of `all` may share its storage: it holds these values and nothing else
      this.texts.push(ascii ? all.substring(at, at + len) : buf.utf8Slice(off + at, off + at + len));
      at += len;
    }
    this.decoded = this.size;
    this.decodedEnd = this.arenaEnd;
  }

  /** The code of the value whose UTF-8 bytes are `b[s, e)`, or -1 when it has none yet. */
  find(b: Uint8Array, s: number, e: number): number {
    if (this.size <= SMALL) {
      this.missAt = -1;
      return this.small(b, s, e);
    }
    const at = this.probe(b, s, e);
    const c = this.slots[(at << 2) + 1];
    this.missAt = c < 0 ? at : -1;
    return c;
  }

  /**
   * The code of `b[s, e)` (well-formed UTF-8) just after {@link find} gave -1 for it, with no other
   * look-up in this dictionary between: a new value, stored in the slot where that look-up ended, so
   * it is not probed for twice. Any other case is {@link codeBytes}.
   */
  addMissed(b: Uint8Array, s: number, e: number): number {
    const at = this.missAt;
    if (at < 0) return this.codeBytes(b, s, e);
    this.missAt = -1;
    return this.insert(at, b, s, e, undefined);
  }

  /**
   * The code of the value whose UTF-8 bytes are `b[s, e)` (well-formed UTF-8); a new value gets the next
   * code. Its text is `text(b, s, e)` when given (called only for a new value), else the bytes decoded
   * as UTF-8 when {@link values} is read.
   */
  codeBytes(b: Uint8Array, s: number, e: number, text?: (b: Uint8Array, s: number, e: number) => string): number {
    this.missAt = -1;
    if (this.size <= SMALL) {
      const c = this.small(b, s, e);
      if (c >= 0) return c;
    }
    const at = this.probe(b, s, e);
    const found = this.slots[(at << 2) + 1];
    return found >= 0 ? found : this.insert(at, b, s, e, text?.(b, s, e));
  }

  /**
   * The code of a value given as a string; a new value gets the next code. The value must be
   * well-formed text (no lone surrogate: the readers refuse those in ids), since its UTF-8 bytes are its key.
   */
  code(id: string): number {
    this.missAt = -1;
    const bytes = Buffer.from(id, 'utf8');
    const at = this.probe(bytes, 0, bytes.length);
    const found = this.slots[(at << 2) + 1];
    return found >= 0 ? found : this.insert(at, bytes, 0, bytes.length, id);
  }

  /** Store a new value in the empty slot `at` found by the last {@link probe} of it; `text` is its text when known. */
  private insert(at: number, b: Uint8Array, s: number, e: number, text?: string): number {
    const len = e - s;
    const c = this.size++;
    if (text !== undefined && this.decoded === c) {
      this.texts.push(ownCopy(text));
      this.decoded++;
      this.decodedEnd += len;
    }
    if (c === this.lens.length) {
      const lens = new Int32Array(c * 2);
      lens.set(this.lens);
      this.lens = lens;
    }
    this.lens[c] = len;
    if (this.arenaEnd + len > this.arena.length) {
      const bigger = new Uint8Array(Math.max(this.arena.length * 2, this.arenaEnd + len));
      bigger.set(this.arena.subarray(0, this.arenaEnd));
      this.arena = bigger;
    }
    const slots = this.slots;
    const k = at << 2;
    const off = this.arenaEnd;
    slots[k] = this.tag;
    slots[k + 1] = c;
    slots[k + 2] = this.w0;
    slots[k + 3] = len <= 8 ? this.w1 : off;
    this.arena.set(b.subarray(s, e), off);
    if (c < SMALL) {
      const j = this.smallSlot(b, s, e);
      const t = this.smallTab;
      t[j] = len;
      t[j + 1] = c;
      t[j + 2] = this.w0;
      t[j + 3] = len <= 8 ? this.w1 : off;
    }
    this.arenaEnd += len;
    if (this.size * 2 > this.slots.length >> 2) this.grow();
    return c;
  }

  private grow(): void {
    const old = this.slots;
    const slots = new Int32Array(old.length * 2).fill(-1);
    const mask = (slots.length >> 2) - 1;
    this.shift--;
    for (let i = 0; i < old.length; i += SLOT) {
      if (old[i + 1] < 0) continue;
      let at = Math.imul(old[i] ^ old[i + 2], GOLD) >>> this.shift;
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
    const n = this.size;
    const start = new Int32Array(n + 1);
    const arena = new Uint8Array(this.arenaEnd);
    // the arena holds values in code order already (each new value is appended), so offsets follow from lengths
    for (let c = 0; c < n; c++) start[c + 1] = start[c] + this.lens[c];
    arena.set(this.arena.subarray(0, this.arenaEnd));
    return { arena, start };
  }

  /**
   * Codes in this dictionary for every value of `other`, in its code order; values new here get the
   * next codes in that order (so merging the dictionaries of a file's consecutive parts gives the codes
   * one reader would have given).
   */
  merge(other: DictionaryBytes, text?: (b: Uint8Array, s: number, e: number) => string): Int32Array {
    const n = other.start.length - 1;
    const map = new Int32Array(n);
    for (let c = 0; c < n; c++) map[c] = this.codeBytes(other.arena, other.start[c], other.start[c + 1], text);
    return map;
  }
}

import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { IdDictionary } from '../../src/ingest/idDictionary.js';

describe('IdDictionary', () => {
  it('gives the codes a string-keyed Map would, whether an id comes as a string or as UTF-8 bytes (fast-check; the Map is the reference)', () => {
    const id = fc.oneof(fc.constantFrom('', 'm1', 'm2', 'José', 'Jose\u0301', '🛠', 'a'.repeat(40)), fc.string({ maxLength: 12, unit: 'binary' }).filter((s) => /^(?:[^\ud800-\udfff]|[\ud800-\udbff][\udc00-\udfff])*$/.test(s)) /* well-formed: the readers refuse the rest */, fc.nat(5000).map((n) => `u${n}`));
    fc.assert(
      fc.property(fc.array(fc.tuple(id, fc.boolean()), { maxLength: 3000 }), (ops) => {
        const d = new IdDictionary();
        const ref = new Map<string, number>();
        for (const [s, asBytes] of ops) {
          const want = ref.get(s);
          if (asBytes) {
            const b = Buffer.from(`,${s},`); // the id inside a larger buffer, as in a read
            expect(d.find(b, 1, b.length - 1)).toBe(want ?? -1);
          }
          const got = d.code(s);
          if (want === undefined) ref.set(s, got);
          expect(got).toBe(ref.get(s));
          expect(d.values[got]).toBe(s);
        }
        expect(d.values.length).toBe(ref.size);
      }),
      { seed: 53, numRuns: 60 },
    );
  });

  it('values found by their bytes are decoded when read, ASCII or not, whenever values is read (fast-check; a string-keyed Map is the reference)', () => {
    const id = fc.oneof(fc.constantFrom('', 'José', '🛠', 'a'.repeat(40)), fc.nat(2000).map((n) => `u${n}`), fc.nat(50).map((n) => `réservation-${n}`));
    fc.assert(
      fc.property(fc.array(fc.tuple(id, fc.nat(3)), { maxLength: 2000 }), (ops) => {
        const d = new IdDictionary();
        const ref = new Map<string, number>();
        for (const [s, how] of ops) {
          const b = Buffer.from(`"${s}"`);
          const got = how === 0 ? d.code(s) : d.codeBytes(b, 1, b.length - 1); // strings and bytes mixed
          if (!ref.has(s)) ref.set(s, ref.size);
          expect(got).toBe(ref.get(s));
          if (how === 3) expect(d.values[got]).toBe(s); // read midway: earlier byte-found values decoded here
        }
        expect(d.values).toEqual([...ref.keys()]);
        expect(d.size).toBe(ref.size);
      }),
      { seed: 67, numRuns: 60 },
    );
  });

  it('"José" precomposed and decomposed are two ids (bytes, not normalised text)', () => {
    const d = new IdDictionary();
    expect(d.code('Jos\u00e9')).not.toBe(d.code('Jose\u0301'));
  });
});

describe('IdDictionary.merge', () => {
  it('merging the dictionary of a later part gives the codes one dictionary over both parts gives (fast-check)', () => {
    const text = (b: Uint8Array, s: number, e: number) => Buffer.from(b.subarray(s, e)).toString('utf8');
    fc.assert(
      fc.property(fc.array(fc.nat(300).map((n) => `m${n}`), { maxLength: 500 }), fc.nat(500), (ids, cut) => {
        const one = new IdDictionary();
        const want = ids.map((s) => one.code(s));
        const first = new IdDictionary(), second = new IdDictionary();
        const k = Math.min(cut, ids.length);
        const a = ids.slice(0, k).map((s) => first.code(s));
        const b = ids.slice(k).map((s) => second.code(s));
        const map = first.merge(second.toBytes(), text);
        expect([...a, ...b.map((c) => map[c])]).toEqual(want);
        expect(first.values).toEqual(one.values);
      }),
      { seed: 41, numRuns: 200 },
    );
  });
});

describe('IdDictionary.addMissed (a new id stored where its look-up ended)', () => {
  it('gives the codes code() gives, whatever other calls come between find and addMissed (fast-check; a string-keyed Map is the reference)', () => {
    const id = fc.oneof(fc.constantFrom('', 'm1', 'José', '🛠', 'a'.repeat(40)), fc.nat(3000).map((n) => `u${n}`));
    // what happens between a find that missed and addMissed: nothing, another find, a codeBytes, or a code()
    const between = fc.constantFrom('none', 'find', 'codeBytes', 'code');
    fc.assert(
      fc.property(fc.array(fc.tuple(id, between, id), { maxLength: 3000 }), (ops) => {
        const d = new IdDictionary();
        const ref = new Map<string, number>();
        const refCode = (s: string) => {
          if (!ref.has(s)) ref.set(s, ref.size);
          return ref.get(s)!;
        };
        for (const [s, how, other] of ops) {
          const b = Buffer.from(`,${s},`);
          const found = d.find(b, 1, b.length - 1);
          expect(found).toBe(ref.get(s) ?? -1);
          if (found >= 0) continue;
          const o = Buffer.from(other);
          if (how === 'find') expect(d.find(o, 0, o.length)).toBe(ref.get(other) ?? -1);
          if (how === 'codeBytes') expect(d.codeBytes(o, 0, o.length)).toBe(refCode(other));
          if (how === 'code') expect(d.code(other)).toBe(refCode(other));
          expect(d.addMissed(b, 1, b.length - 1)).toBe(refCode(s));
        }
        expect(d.values).toEqual([...ref.keys()]);
      }),
      { seed: 61, numRuns: 60 },
    );
  });
});

describe('IdDictionary past many growths', () => {
  it('200,000 ids looked up by their bytes (find, then addMissed for a new one) get the codes a string-keyed Map gives, the reference', () => {
    const d = new IdDictionary();
    const ref = new Map<string, number>();
    const wrong: string[] = [];
    let x = 2026;
    for (let i = 0; i < 600_000; i++) {
      x = (Math.imul(x, 1103515245) + 12345) >>> 0;
      const id = (x >>> 8) % 3 === 0 ? `member-${(x >>> 4) % 200_000}-of-the-makerspace` : `m${(x >>> 4) % 200_000}`;
      const b = Buffer.from(`,${id},`);
      let c = d.find(b, 1, b.length - 1);
      if (c !== (ref.get(id) ?? -1)) wrong.push(`${id}: ${c} for ${ref.get(id) ?? -1}`);
      if (c < 0) {
        c = d.addMissed(b, 1, b.length - 1);
        ref.set(id, c);
      }
    }
    expect(wrong.slice(0, 5)).toEqual([]);
    expect(d.size).toBe(ref.size);
    expect(d.values).toEqual([...ref.keys()]);
  }, 60_000); // a bound on a hang
});

describe('IdDictionary slot comparisons (values of up to 8 bytes whole in a slot, longer ones from the arena, 255 bytes and more by their stored length)', () => {
  it('values sharing their first bytes and differing in length around 4, 8, 255 bytes or in a late byte get the codes a string-keyed Map gives (fast-check; the Map is the reference)', () => {
    // lengths at the edges of the slot's words and of the tag's length byte; NUL bytes make zero-filled words ambiguous without the length
    const len = fc.constantFrom(0, 1, 3, 4, 5, 7, 8, 9, 12, 16, 17, 254, 255, 256, 300);
    const id = fc.tuple(fc.constantFrom('a', 'b', '\u0000', 'é'), len, fc.nat(3), fc.nat(400)).map(([c, n, last, at]) => {
      const chars: string[] = Array.from({ length: n }, () => c);
      if (n > 0) chars[at % n] = String.fromCharCode(120 + last); // one byte changed somewhere
      return chars.join('');
    });
    fc.assert(
      fc.property(fc.array(fc.tuple(id, fc.boolean()), { maxLength: 400 }), (ops) => {
        const d = new IdDictionary();
        const ref = new Map<string, number>();
        for (const [s, asFind] of ops) {
          const b = Buffer.from(`,${s},`);
          if (asFind) expect(d.find(b, 1, b.length - 1)).toBe(ref.get(s) ?? -1);
          const got = d.codeBytes(b, 1, b.length - 1);
          if (!ref.has(s)) ref.set(s, ref.size);
          expect(got).toBe(ref.get(s));
        }
        expect(d.values).toEqual([...ref.keys()]);
      }),
      { seed: 79, numRuns: 150 },
    );
  });
});

/**
 * Pseudonyms are HMAC-SHA-256, checked against the test vectors of RFC 4231 §4 (every case; case 5
 * is truncated to 128 bits there), listed with their confirmation in test/fixtures/published-values.md;
 * and the key file's rules (raw bytes, at least 32, at most 64 KiB).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { MAX_KEY_BYTES, MIN_KEY_BYTES, pseudonym, readKeyFile } from '../../src/audience/pseudonym.js';
import { TidemarkError } from '../../src/errors.js';
import { tempDir } from '../core/helpers.js';

const RFC4231: [string, Buffer, Buffer | string, string][] = [
  ['case 1', Buffer.alloc(20, 0x0b), 'Hi There', 'b0344c61d8db38535ca8afceaf0bf12b881dc200c9833da726e9376c2e32cff7'],
  ['case 2', Buffer.from('Jefe'), 'what do ya want for nothing?', '5bdcc146bf60754e6a042426089575c75a003f089d2739839dec58b964ec3843'],
  ['case 3', Buffer.alloc(20, 0xaa), Buffer.alloc(50, 0xdd), '773ea91e36800e46854db8ebd09181a72959098b3ef8c122d9635514ced565fe'],
  ['case 4', Buffer.from(Array.from({ length: 25 }, (_, i) => i + 1)), Buffer.alloc(50, 0xcd), '82558a389a443c0ea4cc819899f2083a85f0faa3e578f8077a2e3ff46729665b'],
  ['case 6', Buffer.alloc(131, 0xaa), 'Test Using Larger Than Block-Size Key - Hash Key First', '60e431591ee0b67f0d8a26aacbf5b77f8e0bc6213728c5140546040f0ee37f54'],
  ['case 7', Buffer.alloc(131, 0xaa), 'This is a test using a larger than block-size key and a larger than block-size data. The key needs to be hashed before being used by the HMAC algorithm.', '9b09ffa71b942fcb27635fbcd5b0e944bfdc63644f0713938a7f51535c3a35e2'],
];

describe('pseudonym: HMAC-SHA-256 as hex (RFC 4231 §4)', () => {
  it.each(RFC4231)('%s', (_, key, data, want) => {
    expect(pseudonym(key, data)).toBe(want);
  });

  it('case 5: the first 128 bits', () => {
    // RFC 4231 §4.6 lists the output truncated to 128 bits
    expect(pseudonym(Buffer.alloc(20, 0x0c), 'Test With Truncation').slice(0, 32)).toBe('a3b6167473100ee06e0c796c2955552b');
  });

  it('a string id is hashed as its UTF-8 bytes (RFC 3629): "é" is C3 A9', () => {
    const key = Buffer.alloc(32, 7);
    expect(pseudonym(key, 'é')).toBe(pseudonym(key, Buffer.from([0xc3, 0xa9])));
    expect(pseudonym(key, 'é')).not.toBe(pseudonym(key, Buffer.from([0xe9])));
  });
});

describe('readKeyFile', () => {
  let t: ReturnType<typeof tempDir>;
  beforeAll(() => {
    t = tempDir();
  });
  afterAll(() => t.done());

  const code = (f: () => unknown) => {
    try {
      f();
    } catch (e) {
      return e instanceof TidemarkError ? [e.code, e.message] : ['other', String(e)];
    }
    return ['none', ''];
  };

  it('reads the bytes exactly as stored, a trailing line feed included', () => {
    const bytes = Buffer.concat([Buffer.alloc(32, 0x61), Buffer.from('\n')]);
    expect(readKeyFile(t.file('k.key', bytes)).equals(bytes)).toBe(true);
  });

  it('refuses a key of 31 bytes, accepts 32 (and 64 KiB), refuses one byte more', () => {
    expect(MIN_KEY_BYTES).toBe(32);
    expect(code(() => readKeyFile(t.file('short.key', Buffer.alloc(31, 1))))).toEqual(['INPUT_INVALID', 'the key is 31 bytes; a key needs at least 32']);
    expect(code(() => readKeyFile(t.file('empty.key', '')))).toEqual(['INPUT_INVALID', 'the key is 0 bytes; a key needs at least 32']);
    expect(readKeyFile(t.file('ok.key', Buffer.alloc(32, 1)))).toHaveLength(32);
    expect(readKeyFile(t.file('max.key', Buffer.alloc(MAX_KEY_BYTES, 1)))).toHaveLength(MAX_KEY_BYTES);
    expect(code(() => readKeyFile(t.file('long.key', Buffer.alloc(MAX_KEY_BYTES + 1, 1))))[0]).toBe('INPUT_INVALID');
  });

  it('refuses a missing file and a folder', () => {
    expect(code(() => readKeyFile(`${t.dir}/none.key`))).toEqual(['FILE_NOT_FOUND', 'no such key file']);
    expect(code(() => readKeyFile(t.dir))[0]).toBe('FILE_UNREADABLE');
  });
});

/**
 * Pseudonyms for audience lists: HMAC-SHA-256 (RFC 2104 with SHA-256, the construction whose test
 * vectors RFC 4231 gives) of the user id's UTF-8 bytes under a secret key, written as 64 lower-case hex
 * digits. The same key gives the same pseudonym for the same id every week, so lists can be joined
 * without raw ids; without the key an id cannot be checked against a pseudonym. A pseudonymised list
 * is still personal data (whoever holds the key can link it back).
 *
 * The key file is read as raw bytes, exactly as stored: nothing is trimmed or decoded, so a trailing
 * line feed is part of the key. It must hold at least {@link MIN_KEY_BYTES} bytes (the output size of
 * SHA-256, the key length RFC 2104 §3 recommends at least) and at most {@link MAX_KEY_BYTES}.
 */
import { createHmac } from 'node:crypto';
import { closeSync, openSync, readSync } from 'node:fs';
import { TidemarkError } from '../errors.js';

/** The shortest key accepted, in bytes: 32, the length of a SHA-256 output (RFC 2104 §3). */
export const MIN_KEY_BYTES = 32;
/** The longest key file read, in bytes (a key is a short secret; `/dev/zero` must not be read for ever). */
export const MAX_KEY_BYTES = 64 * 1024;

const MAKE_KEY = 'Make one with: head -c 32 /dev/urandom > audience.key, keep it secret, and use the same file every week';

/**
 * The key in `file`, as raw bytes.
 * @throws TidemarkError FILE_NOT_FOUND or FILE_UNREADABLE when the file cannot be read; INPUT_INVALID
 *   when it holds fewer than 32 bytes or more than 64 KiB (located at the file, with how to make a key).
 */
export function readKeyFile(file: string): Buffer {
  let fd: number;
  try {
    fd = openSync(file, 'r');
  } catch (e) {
    const missing = (e as { code?: string }).code === 'ENOENT';
    throw new TidemarkError(missing ? 'FILE_NOT_FOUND' : 'FILE_UNREADABLE', missing ? 'no such key file' : 'cannot open the key file', { file }, MAKE_KEY);
  }
  const buf = Buffer.alloc(MAX_KEY_BYTES + 1);
  let got = 0;
  try {
    for (let n = 1; n > 0 && got <= MAX_KEY_BYTES; got += n) n = readSync(fd, buf, got, MAX_KEY_BYTES + 1 - got, null);
  } catch {
    throw new TidemarkError('FILE_UNREADABLE', 'cannot read the key file (is it a folder?)', { file }, MAKE_KEY);
  } finally {
    closeSync(fd);
  }
  if (got > MAX_KEY_BYTES) throw new TidemarkError('INPUT_INVALID', `the key file is longer than ${MAX_KEY_BYTES / 1024} KiB`, { file }, 'A key is a short secret: 32 to 64 random bytes');
  if (got < MIN_KEY_BYTES) throw new TidemarkError('INPUT_INVALID', `the key is ${got} byte${got === 1 ? '' : 's'}; a key needs at least ${MIN_KEY_BYTES}`, { file }, MAKE_KEY);
  return buf.subarray(0, got);
}

/**
 * HMAC-SHA-256 of `data` (a string is taken as its UTF-8 bytes) under `key`, as lower-case hex. Any
 * key length works here (RFC 4231 tests 4- to 131-byte keys); {@link readKeyFile} asks for 32 or more.
 * @example pseudonym(Buffer.from('Jefe'), 'what do ya want for nothing?')
 *   // '5bdcc146bf60754e6a042426089575c75a003f089d2739839dec58b964ec3843' (RFC 4231, test case 2)
 */
export function pseudonym(key: Uint8Array, data: string | Uint8Array): string {
  return createHmac('sha256', key).update(typeof data === 'string' ? Buffer.from(data, 'utf8') : data).digest('hex');
}

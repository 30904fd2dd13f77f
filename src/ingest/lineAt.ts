import { closeSync, openSync, readSync } from 'node:fs';
import { StringDecoder } from 'node:string_decoder';

/**
 * The 1-based physical line on which a CSV row starts, given the character offset where the previous
 * row ended (papaparse's cursor, before the row separator). Reads the file again in 1 MB chunks (so a
 * file of any size works): called only to word a message, never per row.
 */
export function lineOfRowAfter(file: string, prevRowEnd: number): number {
  const fd = openSync(file, 'r');
  const buf = Buffer.alloc(1 << 20);
  const decoder = new StringDecoder('utf8');
  let line = 1;
  let seen = 0; // characters before the current chunk
  let pending = ''; // text from the offset on, to look at the separator
  try {
    for (;;) {
      const n = readSync(fd, buf, 0, buf.length, null);
      const text = n > 0 ? decoder.write(buf.subarray(0, n)) : decoder.end();
      const end = Math.min(text.length, prevRowEnd - seen);
      for (let i = 0; i < end; i++) if (text.charCodeAt(i) === 10) line++;
      if (prevRowEnd - seen < text.length || n === 0) {
        pending = text.slice(Math.max(0, prevRowEnd - seen), Math.max(0, prevRowEnd - seen) + 2);
        if (pending.length < 2 && n > 0) pending += decoder.write(buf.subarray(0, readSync(fd, buf, 0, 2, null)));
        break;
      }
      seen += text.length;
    }
  } finally {
    closeSync(fd);
  }
  let j = 0;
  if (pending.charCodeAt(j) === 13) j++;
  if (pending.charCodeAt(j) === 10) line++;
  return line;
}

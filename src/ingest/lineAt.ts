import { readFileSync } from 'node:fs';

/**
 * The 1-based physical line on which a CSV row starts, given the character offset where the previous
 * row ended (papaparse's cursor, before the row separator). Reads the file again: called only to word
 * a message, never per row.
 */
export function lineOfRowAfter(file: string, prevRowEnd: number): number {
  const text = readFileSync(file, 'utf8');
  const end = Math.min(prevRowEnd, text.length);
  let line = 1;
  for (let i = 0; i < end; i++) if (text.charCodeAt(i) === 10) line++;
  let j = end;
  if (text.charCodeAt(j) === 13) j++;
  if (text.charCodeAt(j) === 10) line++;
  return line;
}

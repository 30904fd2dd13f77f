/**
 * The raw source text of a top-level member of a JSON object. JSON.parse turns every number into a
 * double and forgets how it was written (`123.0`, `1e3` and `9007199254740993` all lose their token),
 * so the NDJSON reader reads numeric ids back from the text. Written from the JSON grammar of
 * RFC 8259 §2–7; it assumes the text already parsed (JSON.parse accepted it) and only skips over it.
 */

const QUOTE = 34, BACKSLASH = 92, COMMA = 44, COLON = 58, OPEN_OBJ = 123, CLOSE_OBJ = 125, OPEN_ARR = 91, CLOSE_ARR = 93;

function skipWs(t: string, i: number): number {
  for (;;) {
    const c = t.charCodeAt(i);
    if (c !== 32 && c !== 9 && c !== 10 && c !== 13) return i;
    i++;
  }
}

/** From the opening quote of a string to just after its closing quote. */
function skipString(t: string, i: number): number {
  for (let j = i + 1; j < t.length; j++) {
    const c = t.charCodeAt(j);
    if (c === BACKSLASH) j++;
    else if (c === QUOTE) return j + 1;
  }
  return t.length;
}

/** From the start of a value to just after it (nested objects and arrays by depth count, not recursion). */
function skipValue(t: string, i: number): number {
  const c = t.charCodeAt(i);
  if (c === QUOTE) return skipString(t, i);
  if (c === OPEN_OBJ || c === OPEN_ARR) {
    let depth = 0;
    for (let j = i; j < t.length; j++) {
      const d = t.charCodeAt(j);
      if (d === QUOTE) j = skipString(t, j) - 1;
      else if (d === OPEN_OBJ || d === OPEN_ARR) depth++;
      else if ((d === CLOSE_OBJ || d === CLOSE_ARR) && --depth === 0) return j + 1;
    }
    return t.length;
  }
  let j = i;
  while (j < t.length) {
    const d = t.charCodeAt(j);
    if (d === COMMA || d === CLOSE_OBJ || d === CLOSE_ARR || d === 32 || d === 9 || d === 10 || d === 13) break;
    j++;
  }
  return j;
}

/**
 * The raw text of the value of top-level member `key` of the JSON object in `text` (the last one
 * when the key repeats, as JSON.parse keeps the last), or undefined.
 * @example rawMember('{"user_id": 1.0e3, "x": {"user_id": 2}}', 'user_id') // '1.0e3'
 */
export function rawMember(text: string, key: string): string | undefined {
  let i = skipWs(text, 0);
  if (text.charCodeAt(i) !== OPEN_OBJ) return undefined;
  i = skipWs(text, i + 1);
  let found: string | undefined;
  while (i < text.length && text.charCodeAt(i) === QUOTE) {
    const ks = i;
    i = skipString(text, i);
    const inner = text.slice(ks + 1, i - 1);
    const name = inner.includes('\\') ? (JSON.parse(text.slice(ks, i)) as string) : inner;
    i = skipWs(text, i);
    if (text.charCodeAt(i) !== COLON) return found;
    i = skipWs(text, i + 1);
    const vs = i;
    i = skipValue(text, i);
    if (name === key) found = text.slice(vs, i);
    i = skipWs(text, i);
    if (text.charCodeAt(i) !== COMMA) break;
    i = skipWs(text, i + 1);
  }
  return found;
}

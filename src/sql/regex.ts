/**
 * The regular expressions of timestamp parsing, written once and rendered for each SQL engine's
 * regex flavour: RE2 (duckdb, bigquery), PostgreSQL's ARE, Java (spark, trino) and POSIX
 * (snowflake). They are the memory engine's patterns (src/ingest/timestamp.ts) with JavaScript's
 * `\s` spelt out, since `\s` means less in RE2 and POSIX than in JavaScript.
 *
 * Written with `(?<name>…)` for the groups a caller reads and `(?:…)` for the others, and `\s` for
 * JavaScript's white space (ECMA-262 WhiteSpace and LineTerminator: what `String.prototype.trim`
 * removes). Nothing else of regex syntax varies between the flavours used here.
 */

/** A pattern in the notation above. */
export type Pattern = string & { readonly __pattern: true };
export const pattern = (s: string) => s as Pattern;

/** JavaScript's white space: the code points `\s` matches and `trim()` removes (ECMA-262 §12.2, §12.3). */
export const JS_SPACE: readonly number[] = [
  0x09, 0x0a, 0x0b, 0x0c, 0x0d, 0x20, 0xa0, 0x1680, 0x2000, 0x2001, 0x2002, 0x2003, 0x2004, 0x2005, 0x2006, 0x2007, 0x2008,
  0x2009, 0x200a, 0x2028, 0x2029, 0x202f, 0x205f, 0x3000, 0xfeff,
];

export type Flavour = 're2' | 'postgres' | 'java' | 'posix';

function codePoint(c: number, flavour: Flavour): string {
  if (c === 0x09) return '\\t';
  if (c === 0x0a) return '\\n';
  if (c === 0x0d) return '\\r';
  if (c === 0x0c) return '\\f';
  if (c === 0x20) return ' ';
  if (flavour === 'posix') return String.fromCodePoint(c);
  const hex = c.toString(16).toUpperCase().padStart(4, '0');
  return flavour === 'postgres' ? `\\u${hex}` : `\\x{${hex}}`;
}

/** The class of JavaScript white space, in a flavour. */
export function spaceClass(flavour: Flavour): string {
  return `[${JS_SPACE.map((c) => codePoint(c, flavour)).join('')}]`;
}

export interface RenderedPattern {
  source: string;
  /** names[i]: the name of capturing group i + 1 ('' for a group captured only for grouping). */
  names: string[];
}

/**
 * Render a pattern.
 * - `noncapturing`: named groups capture, `(?:…)` stays non-capturing;
 * - `capturing`: every group captures (for flavours without `(?:`); names mark which is which;
 * - `only`: the group `only` captures, every other group is non-capturing (BigQuery extracts one group).
 * @example renderPattern(pattern('^(?<a>x)(?:y)?$'), 'capturing').names // ['a', '']
 */
export function renderPattern(p: Pattern, mode: 'noncapturing' | 'capturing' | 'only', flavour: Flavour = 're2', only?: string): RenderedPattern {
  const names: string[] = [];
  let out = '';
  for (let i = 0; i < p.length; i++) {
    const c = p[i];
    if (c === '\\' && p[i + 1] === 's') {
      out += spaceClass(flavour);
      i++;
    } else if (c === '\\') {
      out += c + p[i + 1];
      i++;
    } else if (p.startsWith('(?<', i)) {
      const end = p.indexOf('>', i);
      const name = p.slice(i + 3, end);
      i = end;
      if (mode === 'only' && name !== only) out += '(?:';
      else {
        out += '(';
        names.push(name);
      }
    } else if (p.startsWith('(?:', i)) {
      i += 2;
      if (mode === 'capturing') {
        out += '(';
        names.push('');
      } else out += '(?:';
    } else out += c;
  }
  return { source: out, names };
}

/** Epoch time: digits, optionally a sign and a decimal part (timestamp.ts, EPOCH). */
export const EPOCH = pattern('^[+-]?[0-9]+(?:[.][0-9]+)?$');

/** ISO 8601, extended format (timestamp.ts, ISO). */
export const ISO = pattern(
  '^(?<y>[0-9]{4})-(?<mo>[0-9]{2})-(?<d>[0-9]{2})(?:[Tt ](?<h>[0-9]{2}):(?<mi>[0-9]{2})(?::(?<s>[0-9]{2})(?:[.,](?<f>[0-9]{1,9}))?)?)?\\s*(?:(?<z>[Zz])|(?<sg>[+-])(?<oh>[0-9]{2})(?::?(?<om>[0-9]{2}))?)?$',
);

/** ISO 8601, basic format, with its `T` (timestamp.ts, ISO_BASIC). */
export const ISO_BASIC = pattern(
  '^(?<y>[0-9]{4})(?<mo>[0-9]{2})(?<d>[0-9]{2})[Tt](?<h>[0-9]{2})(?<mi>[0-9]{2})(?:(?<s>[0-9]{2})(?:[.,](?<f>[0-9]{1,9}))?)?(?:(?<z>[Zz])|(?<sg>[+-])(?<oh>[0-9]{2})(?<om>[0-9]{2})?)?$',
);

/** Only white space (or nothing). */
export const BLANK = pattern('^\\s*$');
/** Leading and trailing white space. */
export const LEADING_SPACE = pattern('^\\s+');
export const TRAILING_SPACE = pattern('\\s+$');

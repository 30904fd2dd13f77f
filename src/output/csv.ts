/**
 * CSV writing per RFC 4180, shared by the CLI and the report writer. Every CSV tidemark writes goes
 * through {@link toCsv}, which also neutralises cells a spreadsheet would run as a formula.
 */

/** Quote a field when it holds a comma, a quote, or a line break. Example: 'a,"b"' → '"a,""b"""'. */
export function csvField(v: unknown): string {
  const s = v === null || v === undefined ? '' : String(v);
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** First characters that make a spreadsheet read a cell as a formula (OWASP "CSV Injection"), and NUL (OWASP ASVS 5.0, 1.2.10). */
const FORMULA_START = /^[=+\-@\t\r\0]/;
/** A plain decimal number, optionally signed, with an optional exponent: "-3", "+4.5", "-1e3", ".5". */
const PLAIN_NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/;

/**
 * A string cell made safe to open in a spreadsheet: when it starts with `=`, `+`, `-`, `@`, a tab, a
 * carriage return or NUL, a single quote is put in front, so the spreadsheet shows it as text and
 * runs nothing (the mitigation of the OWASP "CSV Injection" page). Numbers are left as numbers, and so
 * is a string that is a plain decimal number ("-3", "+4.5", "-1e3"): a spreadsheet reads it as that
 * number, which cannot call anything. Any other value is returned unchanged.
 * @example spreadsheetSafe('=HYPERLINK("x")') // "'=HYPERLINK(\"x\")"
 * @example spreadsheetSafe('-3') // '-3'
 * @example spreadsheetSafe(-3) // -3
 */
export function spreadsheetSafe<T>(v: T): T | string {
  if (typeof v !== 'string' || !FORMULA_START.test(v) || PLAIN_NUMBER.test(v)) return v;
  return `'${v}`;
}

/** Header and rows as CSV text, ending in a newline; string cells pass through {@link spreadsheetSafe}. */
export function toCsv(header: readonly unknown[], rows: readonly (readonly unknown[])[]): string {
  return `${[header, ...rows].map((r) => r.map((v) => csvField(spreadsheetSafe(v))).join(',')).join('\n')}\n`;
}

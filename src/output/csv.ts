/** CSV writing per RFC 4180, shared by the CLI and the report writer. */

/** Quote a field when it holds a comma, a quote, or a line break. Example: 'a,"b"' → '"a,""b"""'. */
export function csvField(v: unknown): string {
  const s = v === null || v === undefined ? '' : String(v);
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** Header and rows as CSV text, ending in a newline. */
export function toCsv(header: readonly unknown[], rows: readonly (readonly unknown[])[]): string {
  return `${[header, ...rows].map((r) => r.map(csvField).join(',')).join('\n')}\n`;
}

/**
 * Output formats shared by every command: aligned text tables for the terminal, RFC 4180 CSV, JSON.
 */
import { escapeControls, showValue } from '../errors.js';
import { writeFileAtomic } from '../output/atomic.js';
import type { Io } from './io.js';

export type Format = 'table' | 'csv' | 'json';
export const FORMATS: readonly Format[] = ['table', 'csv', 'json'];

export { csvField, toCsv } from '../output/csv.js';

/** Widest text cell of a terminal table; longer values (from data) are cut with an ellipsis. */
export const TABLE_CELL_MAX = 60;

/** An aligned text table; numbers right-aligned; control codes escaped and long text cut (showValue). */
export function textTable(header: string[], rows: unknown[][]): string {
  const cells = [header.map((h) => showValue(h, TABLE_CELL_MAX)), ...rows.map((r) => r.map((v) => (v === null || v === undefined ? '-' : showValue(v, TABLE_CELL_MAX))))];
  const widths = header.map((_, c) => Math.max(...cells.map((r) => (r[c] ?? '').length)));
  const numeric = header.map((_, c) => rows.length > 0 && rows.every((r) => typeof r[c] === 'number' || r[c] === null || /^-?[\d.,]+%?( -?[\d.,]+%)?$/.test(String(r[c]))));
  const fmt = (r: string[]) => r.map((v, c) => (numeric[c] ? v.padStart(widths[c]) : v.padEnd(widths[c]))).join('  ').trimEnd();
  return [fmt(cells[0]), widths.map((w) => '-'.repeat(w)).join('  '), ...cells.slice(1).map(fmt)].join('\n') + '\n';
}

export function pct(x: number | null | undefined, digits = 1): string {
  return x === null || x === undefined || !Number.isFinite(x) ? '-' : `${(x * 100).toFixed(digits)}%`;
}

/**
 * Write a command's result to --out (atomically: a temporary file beside it, renamed over it) or
 * stdout. On a terminal, control codes in CSV or JSON data are shown escaped; a pipe or file gets the
 * data exactly.
 */
export function emit(text: string, out: string | undefined, io: Io): void {
  if (!out) return io.stdout(io.stdoutIsTTY ? terminalText(text) : text);
  writeFileAtomic(out, text);
}

/** Text for a terminal: every control code but the line breaks escaped (`\u001b`, `\r`…), so data can never drive the terminal. */
export function terminalText(text: string): string {
  return text.split('\n').map(escapeControls).join('\n');
}

export function json(value: unknown): string {
  return `${JSON.stringify(value, null, 2)}\n`;
}

/**
 * Wrap prose lines longer than `width` at spaces, for an 80-column terminal. Table rows (lines with
 * runs of two spaces) are left as they are. Control codes are escaped first ({@link terminalText}):
 * every table-format output passes through here.
 */
export function wrapProse(text: string, width = 80): string {
  return terminalText(text)
    .split('\n')
    .map((line) => {
      if (line.length <= width || /\S {2,}\S/.test(line)) return line;
      const indent = /^(\* |! |- )/.test(line) ? '  ' : '';
      const out: string[] = [];
      let cur = '';
      for (const word of line.split(' ')) {
        if (cur && cur.length + 1 + word.length > width) {
          out.push(cur);
          cur = indent + word;
        } else cur = cur ? `${cur} ${word}` : word;
      }
      if (cur) out.push(cur);
      return out.join('\n');
    })
    .join('\n');
}

/**
 * Output formats shared by every command: aligned text tables for the terminal, RFC 4180 CSV, JSON.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname } from 'node:path';
import { TidemarkError } from '../errors.js';
import type { Io } from './io.js';

export type Format = 'table' | 'csv' | 'json';
export const FORMATS: readonly Format[] = ['table', 'csv', 'json'];

export { csvField, toCsv } from '../output/csv.js';

/** An aligned text table; numbers right-aligned. */
export function textTable(header: string[], rows: unknown[][]): string {
  const cells = [header, ...rows.map((r) => r.map((v) => (v === null || v === undefined ? '-' : String(v))))];
  const widths = header.map((_, c) => Math.max(...cells.map((r) => (r[c] ?? '').length)));
  const numeric = header.map((_, c) => rows.length > 0 && rows.every((r) => typeof r[c] === 'number' || r[c] === null || /^-?[\d.,]+%?( -?[\d.,]+%)?$/.test(String(r[c]))));
  const fmt = (r: string[]) => r.map((v, c) => (numeric[c] ? v.padStart(widths[c]) : v.padEnd(widths[c]))).join('  ').trimEnd();
  return [fmt(cells[0]), widths.map((w) => '-'.repeat(w)).join('  '), ...cells.slice(1).map(fmt)].join('\n') + '\n';
}

export function pct(x: number | null | undefined, digits = 1): string {
  return x === null || x === undefined || !Number.isFinite(x) ? '-' : `${(x * 100).toFixed(digits)}%`;
}

/** Write a command's result to --out or stdout. */
export function emit(text: string, out: string | undefined, io: Io): void {
  if (!out) return io.stdout(text);
  try {
    mkdirSync(dirname(out), { recursive: true });
    writeFileSync(out, text);
  } catch {
    throw new TidemarkError('FILE_UNREADABLE', 'cannot write the output file', { file: out }, 'Check that the folder is writable');
  }
}

export function json(value: unknown): string {
  return `${JSON.stringify(value, null, 2)}\n`;
}

/**
 * Wrap prose lines longer than `width` at spaces, for an 80-column terminal. Table rows (lines with
 * runs of two spaces) are left as they are.
 */
export function wrapProse(text: string, width = 80): string {
  return text
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

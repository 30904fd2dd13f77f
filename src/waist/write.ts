/** Write a waist folder: manifest.json and one CSV a table (see ./tables.ts). */
import { replaceFolder, WAIST_FOLDER } from '../output/atomic.js';
import { waistCsv } from './csv.js';
import { WAIST_TABLES, tablesToRows, type TableName } from './tables.js';
import type { Waist } from './types.js';

/** The optional file of report sections computed from the events (see Waist.sections). */
export const SECTIONS_FILE = 'sections.json';

/** The files of a waist folder, name → text, in the order written. */
export function waistFiles(w: Waist): Map<string, string> {
  const arrival = w.manifest.states.filter((s) => s.role === 'arrival').map((s) => s.name);
  const rows = tablesToRows(w.tables, arrival);
  const files = new Map<string, string>();
  files.set('manifest.json', `${JSON.stringify(w.manifest, null, 2)}\n`);
  for (const name of Object.keys(WAIST_TABLES) as TableName[]) {
    const spec = WAIST_TABLES[name];
    files.set(spec.file, waistCsv(spec.columns, rows[name]));
  }
  if (w.sections) files.set(SECTIONS_FILE, `${JSON.stringify(w.sections, null, 2)}\n`);
  return files;
}

/**
 * Write the waist into folder `dir`, replacing it atomically (a crash leaves the previous waist
 * whole; see output/atomic.ts). `files`: the waist's files, as {@link waistFiles} gives them, with
 * any more to write beside them (the Parquet copies of the tables). Returns the file names written.
 */
export function writeWaist(w: Waist, dir: string, files: ReadonlyMap<string, string | Uint8Array> = waistFiles(w)): string[] {
  return replaceFolder(dir, files, {}, WAIST_FOLDER);
}

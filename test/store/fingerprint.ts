/**
 * A store's whole content as one string: every table, every row, in a fixed order (read-only). Two
 * stores with the same fingerprint hold the same data, whatever DuckDB's file layout.
 */
import { join } from 'node:path';
import { openDb } from '../../src/store/db.js';
import { STORE_FILE } from '../../src/store/schema.js';

export const TABLES = ['store_info', 'applied_files', 'events', 'user_state', 'users', 'event_names', 'attribute_values', 'updates'];

export async function fingerprint(dir: string): Promise<string> {
  const db = await openDb(join(dir, STORE_FILE), 'read');
  try {
    const out: Record<string, unknown> = {};
    for (const t of TABLES) out[t] = (await db.con.runAndReadAll(`SELECT * FROM ${t} ORDER BY ALL`)).getRowsJson();
    return JSON.stringify(out);
  } finally {
    db.close();
  }
}

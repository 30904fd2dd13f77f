/**
 * The store's DuckDB database: opening it (read-only for the analyses, read-write for an update),
 * small query helpers, and the one translation of DuckDB's lock error into a clear message. DuckDB
 * is imported only here, and only when a store is opened, so the command line starts without it.
 */
import type { DuckDBAppender, DuckDBConnection, DuckDBInstance, DuckDBValue } from '@duckdb/node-api';
import { TidemarkError } from '../errors.js';

/** An open store database. */
export interface Db {
  readonly con: DuckDBConnection;
  /** Run statements that return nothing. */
  run(sql: string, params?: DuckDBValue[]): Promise<void>;
  /** Rows as objects (BIGINT as JS bigint: cast in SQL where a number is wanted). */
  rows(sql: string, params?: DuckDBValue[]): Promise<Record<string, DuckDBValue>[]>;
  /** Stream a query's rows column-wise, a chunk (≤ 2,048 rows) at a time. */
  chunks(sql: string, onChunk: (columns: DuckDBValue[][], rows: number) => void, params?: DuckDBValue[]): Promise<void>;
  appender(table: string): Promise<DuckDBAppender>;
  close(): void;
}

/** Open (or, for 'write', create) the database file. @throws TidemarkError STORE_BUSY when another process holds it. */
export async function openDb(file: string, mode: 'read' | 'write'): Promise<Db> {
  const { DuckDBInstance } = await import('@duckdb/node-api');
  let inst: DuckDBInstance;
  try {
    inst = await DuckDBInstance.create(file, mode === 'read' ? { access_mode: 'READ_ONLY' } : {});
  } catch (e) {
    throw dbError(e, file);
  }
  const con = await inst.connect();
  await con.run("SET TimeZone='UTC'");
  let closed = false;
  return {
    con,
    run: async (sql, params) => {
      await con.run(sql, params);
    },
    rows: async (sql, params) => (await con.runAndReadAll(sql, params)).getRowObjects(),
    chunks: async (sql, onChunk, params) => {
      const r = await con.stream(sql, params);
      for (;;) {
        const chunk = await r.fetchChunk();
        if (!chunk || chunk.rowCount === 0) break;
        onChunk(chunk.getColumns(), chunk.rowCount);
      }
    },
    appender: (table) => con.createAppender(table),
    close: () => {
      if (closed) return;
      closed = true;
      con.closeSync();
      inst.closeSync();
    },
  };
}

/** DuckDB's error on opening, as a TidemarkError: a lock held by another process is STORE_BUSY. */
export function dbError(e: unknown, file: string): TidemarkError {
  const message = String((e as Error)?.message ?? e);
  const lock = /Could not set lock on file.*?\(PID (\d+)\)/s.exec(message);
  if (lock) {
    return new TidemarkError('STORE_BUSY', `the store is in use by another process (pid ${lock[1]}), most likely an update`, { file },
      'Wait for it to finish, then try again');
  }
  return new TidemarkError('STORE_INVALID', `the store's database cannot be opened: ${message.split('\n')[0].slice(0, 200)}`, { file },
    'Check that the folder holds a store written by tidemark update');
}

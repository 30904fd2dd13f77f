/** `tidemark waist`: run the heavy stage once and write the waist, the count tables every analysis reads. */
import type { Command } from 'commander';
import { TidemarkError } from '../../errors.js';
import { waistManifestJsonSchema } from '../../waist/manifest.js';
import { partialPeriodSentence } from '../../waist/derive.js';
import { waistFiles, writeWaist } from '../../waist/write.js';
import { addEventOptions, note, noteRun, waistInput, type CommonOptions } from '../common.js';
import { emit, json } from '../format.js';
import type { Io } from '../io.js';
import { addPerPersonOption, type PerPersonOption } from '../perPerson.js';

export interface WaistCliOptions extends Omit<CommonOptions, 'format'>, PerPersonOption {
  by?: string;
  schema?: boolean | string;
}

export async function runWaist(o: WaistCliOptions, io: Io): Promise<void> {
  if (o.schema !== undefined) {
    if (o.events !== undefined) throw new TidemarkError('USAGE', 'prints the manifest schema and reads no events: give it alone', { key: '--schema' });
    return emit(json(waistManifestJsonSchema()), typeof o.schema === 'string' ? o.schema : undefined, io);
  }
  if (!o.out) throw new TidemarkError('USAGE', 'give the folder to write the waist into', { key: '--out' }, 'For example --out waist/');
  if (o.events === undefined && o.db === undefined) throw new TidemarkError('USAGE', 'no event log given', { key: '--events' }, 'For example --events events.csv');
  const { waist } = await waistInput({ ...o, format: 'table' }, { by: o.by, sections: true });
  // CSV always; Parquet copies of the tables too where the engine has a Parquet writer (DuckDB)
  const tables = waistFiles(waist);
  const parquet = o.engine === 'duckdb' ? await (await import('../../waist/parquet.js')).waistParquetFiles(tables) : new Map<string, Uint8Array>();
  const files = writeWaist(waist, o.out, new Map<string, string | Uint8Array>([...tables, ...parquet]));
  noteRun(io, o, waist.manifest);
  const s = partialPeriodSentence(waist, undefined, { leaveOut: false, asked: false });
  if (s) note(io, o, `note: ${s.charAt(0).toLowerCase()}${s.slice(1)} The waist keeps it; analyses leave it out unless --include-partial.`);
  note(io, o, `waist: ${files.length} files in ${o.out}`);
}

export function waistCommand(program: Command, io: Io): void {
  const cmd = program
    .command('waist')
    .description('write the waist: the count tables every analysis reads (manifest.json and CSV tables, and Parquet copies with --engine duckdb), for --waist DIR')
    .option('--out <dir>', 'folder to write the waist into (replaced as a whole)')
    .option('--by <column>', 'also split retention and durations by this attribute column (refused when its values are nearly unique per user)')
    .option('--schema [file]', 'print the JSON Schema of manifest.json (or write it to FILE) and exit');
  addPerPersonOption(cmd);
  addEventOptions(cmd).action((opts: WaistCliOptions) => runWaist(opts, io));
}

/** `tidemark classify`: one lifecycle state per user and period, streamed to the output. */
import type { Command } from 'commander';
import { TidemarkError } from '../../errors.js';
import type { ClassifiedSink } from '../../engines/types.js';
import { csvField, spreadsheetSafe } from '../../output/csv.js';
import { openAtomicFile } from '../../output/atomic.js';
import { partialPeriodSentence } from '../../waist/derive.js';
import { addEventOptions, addFormatOptions, eventRun, note, noteRun, resolveRules, runClassifyEngine, type CommonOptions } from '../common.js';
import { terminalText, textTable, type Format } from '../format.js';
import type { Io } from '../io.js';

const HEADER = ['user_id', 'period', 'state'];

/** Where the rows go: text pieces to a file (written atomically) or standard output. */
interface Out {
  write(text: string): void;
  commit(): void;
  abort(): void;
}

function outputOf(o: { out?: string }, io: Io): Out {
  if (o.out) return openAtomicFile(o.out);
  // JSON and CSV on a terminal are shown with control codes escaped; a pipe gets the exact data
  const tty = Boolean(io.stdoutIsTTY);
  return { write: (t) => io.stdout(tty ? terminalText(t) : t), commit: () => undefined, abort: () => undefined };
}

/** A sink writing each row as it comes, in the chosen format (a table needs every row first to align). */
export function classifiedSink(format: Format, out: Out): ClassifiedSink & { end(): void } {
  if (format === 'csv') {
    out.write(`${HEADER.join(',')}\n`);
    return { row: (u, p, s) => out.write(`${csvField(spreadsheetSafe(u))},${csvField(p)},${csvField(s)}\n`), end: () => undefined };
  }
  if (format === 'json') {
    let first = true;
    out.write('[');
    return {
      row(u, p, s) {
        out.write(`${first ? '\n' : ',\n'}  ${JSON.stringify({ user_id: u, period: p, state: s })}`);
        first = false;
      },
      end: () => out.write(first ? ']\n' : '\n]\n'),
    };
  }
  const rows: string[][] = [];
  return { row: (u, p, s) => rows.push([u, p, s]), end: () => out.write(textTable(HEADER, rows)) };
}

export async function runClassify(o: CommonOptions, io: Io): Promise<void> {
  if (o.waist !== undefined) {
    throw new TidemarkError('USAGE', 'classify lists every user in every period: it needs the events, and a waist holds only counts', { key: '--waist' }, 'Give --events');
  }
  const rules = resolveRules(o);
  const run = eventRun(o, rules);
  const out = outputOf(o, io);
  const sink = classifiedSink(o.format, out);
  try {
    const { waist } = await runClassifyEngine(o, run, rules, sink);
    sink.end();
    out.commit();
    noteRun(io, o, waist.manifest);
    const s = partialPeriodSentence(waist, undefined, { leaveOut: false, asked: false });
    if (s) note(io, o, `note: ${s.charAt(0).toLowerCase()}${s.slice(1)}`);
  } catch (e) {
    out.abort();
    throw e;
  }
  note(io, o, 'note: this output holds user ids: it is personal data; share it only as your privacy rules allow');
}

export function classifyCommand(program: Command, io: Io): void {
  const cmd = program
    .command('classify')
    .description('the lifecycle state of every user in every period (CSV: user_id,period,state)')
    .option('--waist <dir>', 'not available: classify needs events (a waist holds only counts)');
  addFormatOptions(addEventOptions(cmd), 'csv').action((opts: CommonOptions) => runClassify(opts, io));
}

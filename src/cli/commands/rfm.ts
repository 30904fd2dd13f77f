/** `tidemark rfm`: RFM segments each period and the flows between them, with a chain for `project --matrix`. */
import type { Command } from 'commander';
import { writeFileAtomic } from '../../output/atomic.js';
import { rfmSegments, type RfmOutput, type ScoreRanges } from '../../rfm/segments.js';
import { leftOutJson, noteBehaviour, readBehaviour } from '../behaviour.js';
import { addEventOptions, addFormatOptions, addPartialOption, note, resolveRules, type CommonOptions } from '../common.js';
import { emit, json, pct, textTable, toCsv, wrapProse, type Format } from '../format.js';
import type { Io } from '../io.js';
import { asFlags, wholeNumber } from '../options.js';

export interface RfmCliOptions extends CommonOptions {
  window: string;
  valueColumn?: string;
  matrixOut?: string;
}

const span = (r: [number, number] | null, f = (x: number) => String(x)) => (r === null ? '-' : r[0] === r[1] ? f(r[0]) : `${f(r[0])}..${f(r[1])}`);

export function formatRfm(r: RfmOutput, format: Format, extra: object = {}): string {
  if (format === 'json') return json({ ...r, ...extra });
  const names = r.segments.map((s) => s.name);
  if (format === 'csv') return toCsv(['period', 'scored', ...names], r.periods.map((p) => [p.period, p.scored, ...names.map((n) => p.counts[n])]));
  const last = r.periods[r.periods.length - 1];
  const out = [`RFM segments each period (window ${r.options.window} periods${r.options.valueColumn ? `, value column ${r.options.valueColumn}` : ''})`, ''];
  out.push(textTable(['period', 'scored', ...names], r.periods.slice(-12).map((p) => [p.period, p.scored, ...names.map((n) => p.counts[n])])).trimEnd());
  if (r.periods.length > 12) out.push(`(the latest 12 of ${r.periods.length} periods; every period in the CSV and JSON)`);
  const dims: [string, ScoreRanges | undefined, (x: number) => string][] = [['recency (periods since active)', last.ranges.recency, (x) => String(x)], ['frequency (key events)', last.ranges.frequency, (x) => String(x)], ['value', last.ranges.value, (x) => x.toFixed(2)]];
  out.push('', `Thresholds in ${last.period}: the values each score covered`);
  out.push(textTable(['dimension', '1', '2', '3', '4', '5'], dims.filter(([, v]) => v).map(([n, v, f]) => [n, ...v!.map((x) => span(x, f))])).trimEnd());
  out.push('', 'Segments:', ...r.segments.map((s) => `- ${s.name}: ${s.rule}`), '', `Scoring: ${r.scoring}`, '');
  out.push('Flows between segments, pooled over every transition (share of each row):');
  out.push(textTable(['from \\ to', ...names, 'users'], r.pooled.map((row, i) => {
    const n = row.reduce((a, b) => a + b, 0);
    return [names[i], ...row.map((v) => (n ? pct(v / n) : '-')), n];
  })).trimEnd());
  out.push('', `Long run: ${r.longRun}`, '', r.reading, '', 'The fitted chain is under "model" in the JSON (or --matrix-out FILE): tidemark project --matrix FILE projects it.');
  return wrapProse(`${out.join('\n')}\n`);
}

export async function runRfm(o: RfmCliOptions, io: Io): Promise<void> {
  const rules = resolveRules(o);
  const window = wholeNumber(o.window, '--window', 1, 1000);
  const r = await readBehaviour(o, rules);
  noteBehaviour(io, o, r);
  const out = asFlags(() => rfmSegments(r.log, r.timelines, r.range, { window, valueColumn: o.valueColumn }), { window: '--window', valueColumn: '--value-column' });
  if (o.matrixOut) {
    writeFileAtomic(o.matrixOut, json(out.model));
    note(io, o, `chain: ${o.matrixOut} (tidemark project --matrix ${o.matrixOut})`);
  }
  emit(formatRfm(out, o.format, leftOutJson(r)), o.out, io);
}

export function rfmCommand(program: Command, io: Io): void {
  const cmd = program
    .command('rfm')
    .description('RFM segments: recency, frequency and value scored in quintiles each period, segments, and the flows between them as a Markov chain')
    .option('--window <n>', 'periods of history a score reads', '12')
    .option('--value-column <name>', 'a column with a number per event (a fee, a price) for the value score')
    .option('--matrix-out <file>', 'write the fitted chain for tidemark project --matrix');
  addFormatOptions(addPartialOption(addEventOptions(cmd)), 'table').action((opts: RfmCliOptions) => runRfm(opts, io));
}

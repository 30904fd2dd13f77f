/** `tidemark rules diff A B --events F…`: how the classification and the headlines change from rule set A to B. */
import { statSync } from 'node:fs';
import type { Command } from 'commander';
import type { Headlines } from '../compare/headlines.js';
import { diffRules, type RulesDiff, type SideRun } from '../compare/run.js';
import { createEngine } from '../engines/index.js';
import { TidemarkError, escapeControls, showValue } from '../errors.js';
import { resolveRules as resolveRulesFile } from '../rules/resolve.js';
import { partialPeriodSentence } from '../waist/derive.js';
import type { Rules } from '../rules/schema.js';
import { addEventOptions, addFormatOptions, addPartialOption, eventRun, note, partialJson, rowLine, storeEventRun, type CommonOptions, type EventRun } from './common.js';
import { emit, json, pct, textTable, toCsv, wrapProse, type Format } from './format.js';
import type { Io } from './io.js';
import { flagError } from './options.js';

/** Widest state name in the terminal table (names may be 40 characters; the table fits 80 columns). */
const NAME = 18;
const name = (s: string) => showValue(s, NAME);
/** B − A in percentage points, one decimal: `+4.6 pt`, `-1.9 pt`, `0.0 pt`; `-` when either is missing. */
const points = (a: number | null | undefined, b: number | null | undefined) => {
  if (a === null || a === undefined || b === null || b === undefined) return '-';
  const t = Math.abs((b - a) * 100).toFixed(1);
  return t === '0.0' ? '0.0 pt' : `${b > a ? '+' : '-'}${t} pt`;
};
const count = (n: number) => n.toLocaleString('en-US');
/** A rules value in words: lists joined, splits as `engaged at 3+ (steady/keen)`, nothing as `none`. */
function value(v: unknown): string {
  if (v === null || v === undefined) return 'none';
  if (!Array.isArray(v)) return showValue(v, 40);
  if (v.length === 0) return 'none';
  return v.map((x) => (typeof x === 'object' && x !== null && 'atLeast' in x ? splitText(x as { state: string; atLeast: number; names: string[] }) : showValue(x, 40))).join(', ');
}
const splitText = (x: { state: string; atLeast: number; names: string[] }) => `${x.state} at ${x.atLeast}+ (${x.names.map(name).join('/')})`;

/** The states of both sides, A's order first, then B's states A lacks. */
function unionStates(a: readonly string[], b: readonly string[]): string[] {
  return [...a, ...b.filter((s) => !a.includes(s))];
}

function headlineRows(a: Headlines, b: Headlines): unknown[][] {
  const rows: unknown[][] = [];
  const ret = (h: Headlines, s: string) => h.retention.find((r) => r.state === s)?.rate;
  for (const s of unionStates(a.retention.map((r) => r.state), b.retention.map((r) => r.state))) {
    rows.push([`retention of ${name(s)}`, pct(ret(a, s)), pct(ret(b, s)), points(ret(a, s), ret(b, s))]);
  }
  const mix = (h: Headlines, s: string) => h.latestMix.states.find((r) => r.state === s)?.share;
  const mixLabel = a.latestMix.period === b.latestMix.period ? `share ${a.latestMix.period}` : 'share, latest';
  for (const s of unionStates(a.latestMix.states.map((r) => r.state), b.latestMix.states.map((r) => r.state))) {
    rows.push([`${mixLabel} ${name(s)}`, pct(mix(a, s)), pct(mix(b, s)), points(mix(a, s), mix(b, s))]);
  }
  const long = (h: Headlines, s: string) => h.longRun.shares?.find((r) => r.state === s)?.share;
  if (a.longRun.shares || b.longRun.shares) {
    const states = unionStates((a.longRun.shares ?? []).map((r) => r.state), (b.longRun.shares ?? []).map((r) => r.state));
    for (const s of states) rows.push([`long-run share ${name(s)}`, pct(long(a, s)), pct(long(b, s)), points(long(a, s), long(b, s))]);
  }
  return rows;
}

export function formatRulesDiff(d: RulesDiff, format: Format, extra: object = {}): string {
  if (format === 'json') return json({ ...d, ...extra });
  if (format === 'csv') {
    const rows = [
      ...d.changes.map((c) => [c.from, c.to, c.count]),
      ...d.onlyA.map((c) => [c.state, '', c.count]),
      ...d.onlyB.map((c) => ['', c.state, c.count]),
    ];
    return toCsv(['state_a', 'state_b', 'user_periods'], rows);
  }
  const side = (s: RulesDiff['a']) => `${s.file}${s.name ? ` (${s.name}${s.version ? `, version ${s.version}` : ''})` : ''}`;
  const fromA = new Map<string, number>();
  for (const c of d.changes) fromA.set(c.from, (fromA.get(c.from) ?? 0) + c.count);
  const ha = d.headlines.a, hb = d.headlines.b;
  const out = [
    `A: ${side(d.a)}`,
    `B: ${side(d.b)}`,
    d.rulesChanged.length ? `Changed: ${d.rulesChanged.map((c) => `${c.key} ${value(c.a)} → ${value(c.b)}`).join('; ')}` : 'The two rule sets classify alike (no key that shapes the states differs).',
    '',
    `Classification: ${count(d.compared)} user-periods under both; ${count(d.changed)} (${pct(d.compared ? d.changed / d.compared : null)}) change state.`,
    textTable(['under A', 'under B', 'user-periods', 'of A\'s'], d.changes.map((c) => [name(c.from), name(c.to), count(c.count), pct(c.count / (fromA.get(c.from) as number))])).trimEnd(),
  ];
  if (d.onlyA.length) out.push(`Under A only (no state under B): ${d.onlyA.map((c) => `${name(c.state)} ${count(c.count)}`).join(', ')}.`);
  if (d.onlyB.length) out.push(`Under B only (no state under A): ${d.onlyB.map((c) => `${name(c.state)} ${count(c.count)}`).join(', ')}.`);
  out.push(
    '',
    'Headlines: retention pooled over all transitions, the latest mix, the long run',
    textTable(['', 'A', 'B', 'B - A'], headlineRows(ha, hb)).trimEnd(),
  );
  for (const [k, h] of [['A', ha], ['B', hb]] as const) if (!h.longRun.shares) out.push(`Long run under ${k}: ${h.longRun.sentence}`);
  const dec = (h: Headlines) => h.decomposition;
  const same = dec(ha).base === dec(hb).base && dec(ha).compare === dec(hb).compare;
  out.push('', same && dec(ha).base !== null ? `Why retention moved into ${dec(ha).compare} against ${dec(ha).base}:` : 'Why retention moved (the latest change):');
  const said = (k: string, h: Headlines) => {
    const x = dec(h);
    return x.sentence === null ? `${k}: ${(x as { reason: string }).reason}` : `${k}: ${same ? '' : `(${x.compare} against ${x.base}) `}${x.sentence}`;
  };
  if (same && dec(ha).sentence === dec(hb).sentence) out.push(said('A and B', ha));
  else out.push(said('A', ha), said('B', hb));
  return wrapProse(`${out.join('\n')}\n`);
}

/**
 * The event files, each checked to be a regular file: the events are read once for each rule set,
 * and a pipe or device gives its data only once.
 */
function checkReadTwice(files: readonly string[]): void {
  for (const f of files) {
    let regular = true;
    try {
      regular = statSync(f).isFile();
    } catch {
      continue; // a missing file is reported by the reader, with its message
    }
    if (!regular) throw new TidemarkError('USAGE', `'${showValue(f, 60)}' is not a regular file: rules diff reads the events once for each rule set, and a pipe or device gives its data only once`, { key: '--events' }, 'Save the events to a file first');
  }
}

export interface RulesDiffOptions extends CommonOptions {}

export async function runRulesDiff(fileA: string, fileB: string, o: RulesDiffOptions, io: Io): Promise<void> {
  if (o.rules !== undefined) throw new TidemarkError('USAGE', 'the two rules files are the arguments A and B', { key: '--rules' }, 'For example: tidemark rules diff rules/weekly.yaml my-rules.yaml --events events.csv');
  const sides = (columns: Partial<Rules['columns']>) => ({
    a: { file: fileA, rules: resolveRulesFile({ file: fileA, columns }) },
    b: { file: fileB, rules: resolveRulesFile({ file: fileB, columns }) },
  });
  let a: ReturnType<typeof sides>['a'], b: ReturnType<typeof sides>['b'];
  let run: EventRun;
  let cleanup = () => {};
  if (o.store !== undefined) {
    // the store's events, exported under its column names: A and B read them with those names
    ({ run, cleanup } = await storeEventRun(o, [], (stored) => ({ a, b } = sides(stored.columns))));
  } else {
    ({ a, b } = sides({ user: o.userColumn, timestamp: o.timestampColumn, event: o.eventColumn }));
    run = eventRun(o, a.rules);
    if (run.source.kind === 'files') checkReadTwice(run.source.files);
  }
  let result: Awaited<ReturnType<typeof diffRules>>;
  try {
    result = await diffRules(createEngine(o.engine), run.source, a!, b!, run.range, { includePartial: o.includePartial });
  } catch (e) {
    throw flagError(e, run.flags);
  } finally {
    cleanup();
  }
  const { diff, runs } = result;
  const partial = (r: SideRun) => partialJson(r);
  emit(formatRulesDiff(diff, o.format, { rows: { a: runs.a.waist.manifest.rows, b: runs.b.waist.manifest.rows }, lastPeriod: { a: partial(runs.a).lastPeriod ?? null, b: partial(runs.b).lastPeriod ?? null } }), o.out, io);
  const lineA = rowLine(runs.a.waist.manifest.rows), lineB = rowLine(runs.b.waist.manifest.rows);
  if (lineA === lineB) note(io, o, lineA);
  else {
    note(io, o, `A ${lineA}`);
    note(io, o, `B ${lineB}`);
  }
  const warnings = new Set([...runs.a.waist.manifest.warnings, ...runs.b.waist.manifest.warnings]);
  for (const w of warnings) io.stderr(`warning: ${escapeControls(w)}\n`);
  // a rules file's version is to be bumped when a change would reclassify users (rules/weekly.yaml)
  const reclassifies = diff.rulesChanged.filter((c) => !['warmup', 'tenureBands', 'minCell'].includes(c.key));
  if (reclassifies.length && diff.a.name === diff.b.name && diff.a.version === diff.b.version) {
    note(io, o, `note: A and B share the name and version ${diff.a.name ?? '(none)'} ${diff.a.version ?? '(none)'} but classify users differently (${reclassifies.map((c) => c.key).join(', ')}): give B a new version before using it`);
  }
  for (const [k, r] of [['A', runs.a], ['B', runs.b]] as const) {
    const s = partialPeriodSentence(r.waist, r.dropped, { leaveOut: true, asked: Boolean(o.includePartial) });
    if (s) note(io, o, `note (${k}): ${s.charAt(0).toLowerCase()}${s.slice(1)} (the headlines; the classification counts keep every period)`);
  }
}

/** Give the `rules diff` command (declared in commands/rules.ts) its options and action. */
export function configureRulesDiff(cmd: Command, io: Io): void {
  cmd.option('--store <dir>', 'read the events a store (tidemark update) applied instead of --events');
  addFormatOptions(addPartialOption(addEventOptions(cmd)), 'table').action((fa: string, fb: string, opts: RulesDiffOptions) => runRulesDiff(fa, fb, opts, io));
}

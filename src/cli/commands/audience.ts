/** `tidemark audience`: the users who entered a state at a period, as a list to act on (personal data). */
import type { Command } from 'commander';
import { entrySpec, type EntrySpec } from '../../audience/entry.js';
import type { AudienceList } from '../../audience/list.js';
import { readKeyFile } from '../../audience/pseudonym.js';
import { audienceFromEvents } from '../../audience/run.js';
import { parseWhere } from '../../audience/where.js';
import type { EventSource, RangeOptions } from '../../engines/types.js';
import { TidemarkError, showValue } from '../../errors.js';
import type { Rules } from '../../rules/schema.js';
import { addEventOptions, addFormatOptions, addPartialOption, eventRun, note, noteRun, partialJson, resolveRules, storeEventRun, type CommonOptions } from '../common.js';
import { emit, json, textTable, toCsv, wrapProse, type Format } from '../format.js';
import type { Io } from '../io.js';
import { asFlags, dateOption, flagError } from '../options.js';
import { partialPeriodSentence } from '../../waist/derive.js';

export interface AudienceCliOptions extends CommonOptions {
  period?: string;
  entered?: string;
  fromState?: string;
  where: string[];
  pseudonymise?: string;
}

/** The fixed columns, before the attributes. */
const FIXED = ['state', 'previous_state', 'tenure', 'last_active'];

/**
 * The header: the id column, the fixed columns, then the attribute columns by their names; an
 * attribute whose name is already taken is written `attribute:NAME` (then `attribute:NAME:2`…).
 */
export function audienceHeader(list: Pick<AudienceList, 'attributes' | 'pseudonymised'>): string[] {
  const head = [list.pseudonymised ? 'pseudonym' : 'user_id', ...FIXED];
  for (const a of list.attributes) {
    let name = head.includes(a) ? `attribute:${a}` : a;
    for (let k = 2; head.includes(name); k++) name = `attribute:${a}:${k}`;
    head.push(name);
  }
  return head;
}

export function formatAudience(list: AudienceList, format: Format, extra: object = {}): string {
  if (format === 'json') {
    const idKey = list.pseudonymised ? 'pseudonym' : 'userId';
    return json({
      period: list.period,
      entered: list.entry.entered,
      states: list.entry.into,
      fromState: list.entry.from ? { name: list.entry.from.name, states: list.entry.from.states } : null,
      where: list.where,
      definition: list.entry.definition,
      pseudonymised: list.pseudonymised,
      count: list.rows.length,
      attributes: list.attributes,
      users: list.rows.map((r) => ({ [idKey]: r.user, state: r.state, previousState: r.previousState, tenure: r.tenure, lastActive: r.lastActive, attributes: Object.fromEntries(list.attributes.map((a, i) => [a, r.attributes[i]])) })),
      ...extra,
    });
  }
  const head = audienceHeader(list);
  const rows = list.rows.map((r) => [r.user, r.state, r.previousState, r.tenure, r.lastActive, ...r.attributes]);
  if (format === 'csv') return toCsv(head, rows);
  return wrapProse(`${list.entry.definition.charAt(0).toUpperCase()}${list.entry.definition.slice(1)} (${list.period}): ${list.rows.length.toLocaleString('en-US')}\n${textTable(head, rows)}`);
}

/** Who is asked for, in words, for the notes. */
function asked(entry: EntrySpec, list: Pick<AudienceList, 'period' | 'where'>): string {
  const from = entry.from ? ` from ${entry.from.name}` : '';
  const where = list.where.length ? ` with ${list.where.map((w) => `${showValue(w.column, 40)} ${w.values.map((v) => (v === '' ? '(no value)' : showValue(v, 40))).join(' or ')}`).join(' and ')}` : '';
  return `${entry.entered} at ${list.period}${from}${where}`;
}

/** What the list is read from: the events and the rules, or a store's events and rules (--store). */
async function audienceSource(o: AudienceCliOptions, check: (rules: Rules) => void): Promise<{ source: EventSource; rules: Rules; range: RangeOptions; flags: Record<string, string | undefined>; cleanup(): void }> {
  if (o.store !== undefined) {
    const { run, rules, cleanup } = await storeEventRun(o, [], check);
    return { source: run.source, rules, range: run.range, flags: run.flags, cleanup };
  }
  const rules = resolveRules(o);
  const run = eventRun(o, rules);
  check(rules);
  return { source: run.source, rules, range: run.range, flags: run.flags, cleanup: () => {} };
}

export async function runAudience(o: AudienceCliOptions, io: Io): Promise<void> {
  if (o.waist !== undefined) {
    throw new TidemarkError('USAGE', 'audience lists users: it needs the events, and a waist holds only counts', { key: '--waist' }, 'Give --events');
  }
  // every option is checked before any event is read
  const period = dateOption(o.period, '--period');
  if (period === undefined) throw new TidemarkError('USAGE', 'which period? give a date inside it', { key: '--period' }, 'For example --period 2026-09-14');
  if (o.entered === undefined) throw new TidemarkError('USAGE', 'which state? give the state the users entered', { key: '--entered' }, 'For example --entered dormant');
  const where = asFlags(() => parseWhere(o.where), { where: '--where' });
  const key = o.pseudonymise === undefined ? undefined : readKeyFile(o.pseudonymise);
  let entry!: EntrySpec;
  const input = await audienceSource(o, (rules) => {
    entry = asFlags(() => entrySpec(rules, String(o.entered), o.fromState), { entered: '--entered', fromState: '--from-state' });
  });
  let result: Awaited<ReturnType<typeof audienceFromEvents>>;
  try {
    result = await audienceFromEvents(input.source, input.rules, input.range, { period, entry, where, key, includePartial: o.includePartial });
  } catch (e) {
    throw flagError(e, { ...input.flags, period: '--period', where: '--where' });
  } finally {
    input.cleanup();
  }
  const { list, waist, dropped } = result;
  emit(formatAudience(list, o.format, partialJson({ waist, dropped })), o.out, io);
  noteRun(io, o, waist.manifest);
  const s = partialPeriodSentence(waist, dropped, { leaveOut: true, asked: Boolean(o.includePartial) });
  if (s) note(io, o, `note: ${s.charAt(0).toLowerCase()}${s.slice(1)}`);
  if (list.rows.length === 0) note(io, o, `note: nobody entered ${asked(entry, list)}: the list holds its header only`);
  else note(io, o, `audience: ${list.rows.length.toLocaleString('en-US')} user${list.rows.length === 1 ? '' : 's'} entered ${asked(entry, list)}`);
  for (const u of list.unseen) note(io, o, `note: no event has ${showValue(u.column, 40)} '${showValue(u.value, 40)}' (--where matches values exactly as written)`);
  // always, even with --quiet: this is the one output that lists people
  io.stderr(`note: this list holds personal data (${list.pseudonymised ? 'pseudonyms, which whoever holds the key can link back to people' : 'user ids'}). Before contacting anyone on it, follow local privacy law and the consent each person gave; share it only as your privacy rules allow.\n`);
}

export function audienceCommand(program: Command, io: Io): void {
  const cmd = program
    .command('audience')
    .description('list the users who entered a lifecycle state at a period, with previous state, tenure, last active period and attributes (personal data)')
    .option('--period <date>', 'the period (any date inside it, YYYY-MM-DD)')
    .option('--entered <state>', 'the state entered: state at the period is this one, and was not the period before (new users enter the arrival state)')
    .option('--from-state <state>', 'keep only users whose state the period before was this one')
    .option('--where <column=value>', 'keep users whose value in the period is this one; repeatable (same column: any of the values; different columns: all); "column=" keeps users with no value', (v: string, acc: string[]) => [...acc, v], [] as string[])
    .option('--pseudonymise <key-file>', 'write HMAC-SHA-256 pseudonyms (hex) instead of user ids, keyed by the bytes of this file (at least 32)')
    .option('--store <dir>', 'list from a store (tidemark update): its events, under its rules, instead of --events')
    .option('--waist <dir>', 'not available: audience lists users and needs events (a waist holds only counts)');
  addFormatOptions(addPartialOption(addEventOptions(cmd)), 'csv').action((opts: AudienceCliOptions) => runAudience(opts, io));
}

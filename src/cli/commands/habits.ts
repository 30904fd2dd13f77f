/** `tidemark habits`: habit profiles — long-tenured users against users who went dormant early. */
import type { Command } from 'commander';
import { habitProfiles, WEEKDAY_NAMES, type HabitOutput } from '../../habits/profile.js';
import { leftOutJson, noteBehaviour, readBehaviour } from '../behaviour.js';
import { addEventOptions, addFormatOptions, addPartialOption, resolveRules, type CommonOptions } from '../common.js';
import { emit, json, pct, textTable, toCsv, wrapProse, type Format } from '../format.js';
import type { Io } from '../io.js';
import { asFlags, wholeNumber } from '../options.js';
import { plural } from '../../text/plural.js';

export interface HabitsCliOptions extends CommonOptions {
  span: string;
  active: string;
}

export function formatHabits(h: HabitOutput, format: Format, extra: object = {}): string {
  if (format === 'json') return json({ ...h, ...extra });
  const lt = h.longTenured, de = h.droppedEarly;
  if (format === 'csv') {
    return toCsv(['event', 'long_tenured_user_share', 'long_tenured_period_share', 'dropped_early_user_share', 'dropped_early_period_share'],
      lt.events.map((x, i) => [x.event, x.memberShare, x.periodShare, de.events[i].memberShare, de.events[i].periodShare]));
  }
  const out = [`Habit profiles over each user's first ${plural(h.options.span, 'period')}`,
    `Long-tenured: ${h.definitions.longTenured} (${lt.members.toLocaleString('en-US')}). Went dormant early: ${h.definitions.droppedEarly} (${de.members.toLocaleString('en-US')}). Neither: ${h.neither.toLocaleString('en-US')}; left out (observed for fewer periods): ${h.leftOut.toLocaleString('en-US')}.`, ''];
  out.push('Events they keep doing (users who did it; share of their periods with events that hold it):');
  out.push(textTable(['event', 'long-tenured', 'periods', 'dormant early', 'periods'], lt.events.map((x, i) => [x.event, pct(x.memberShare), pct(x.periodShare), pct(de.events[i].memberShare), pct(de.events[i].periodShare)])).trimEnd(), '');
  const m = (v: { mean: number; median: number } | null, f: (x: number) => string) => (v ? `${f(v.mean)} (median ${f(v.median)})` : '-');
  out.push(textTable(['regularity', 'long-tenured', 'dormant early'], [
    ['share of periods active', m(lt.activeShare, (x) => pct(x, 0)), m(de.activeShare, (x) => pct(x, 0))],
    ['longest active run (periods)', m(lt.longestRun, (x) => x.toFixed(1)), m(de.longestRun, (x) => x.toFixed(1))],
  ]).trimEnd(), '');
  out.push('Gaps between active periods (1 = the next period):');
  out.push(textTable(['gap', 'long-tenured', 'dormant early'], lt.gaps.map((g, i) => [g.gap, pct(g.share), pct(de.gaps[i].share)])).trimEnd(), '');
  out.push(textTable(['weekday', 'long-tenured', 'dormant early'], WEEKDAY_NAMES.map((d, i) => [d, pct(lt.weekdays[i]), pct(de.weekdays[i])])).trimEnd());
  const peak = (v: number[]) => v.indexOf(Math.max(...v));
  out.push(`Busiest hour (local): long-tenured ${peak(lt.hours)}:00, dormant early ${peak(de.hours)}:00 (every hour in the JSON).`, '', h.reading, '', `Caution: ${h.caution}`);
  return wrapProse(`${out.join('\n')}\n`);
}

export async function runHabits(o: HabitsCliOptions, io: Io): Promise<void> {
  const rules = resolveRules(o);
  const span = wholeNumber(o.span, '--span', 2, 1000);
  const minActive = o.active === undefined ? Math.ceil(span * 0.75) : wholeNumber(o.active, '--active', 1, span);
  const r = await readBehaviour(o, rules);
  noteBehaviour(io, o, r);
  const h = asFlags(() => habitProfiles(r.log, r.timelines, r.range, { span, minActive, lapseLimit: rules.lapseLimit }), { span: '--span' });
  emit(formatHabits(h, o.format, leftOutJson(r)), o.out, io);
}

export function habitsCommand(program: Command, io: Io): void {
  const cmd = program
    .command('habits')
    .description('habit profiles: what long-tenured users keep doing, against users who went dormant early')
    .option('--span <n>', 'periods from each user\'s first active one that are compared', '8')
    .option('--active <n>', 'active periods among them that make a user long-tenured (default: three quarters of --span, rounded up)');
  addFormatOptions(addPartialOption(addEventOptions(cmd)), 'table').action((opts: HabitsCliOptions) => runHabits(opts, io));
}

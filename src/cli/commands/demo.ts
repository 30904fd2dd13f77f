/**
 * `tidemark demo`: simulate the demo event log (a fictional makerspace) and run the main job on it:
 * the report, the explanation of the planted change and the projection with a what-if.
 */
import { dirname, join } from 'node:path';
import type { Command } from 'commander';
import { CHANGE_WEEK, DEMO_START, PROMO_WEEK, simulateMakerspace } from '../../demo/makerspace.js';
import { explainRetention } from '../../explain/run.js';
import { lifecycleMoves } from '../../lifecycle/moves.js';
import { computeProjection } from '../../markov/run.js';
import { reportOf } from '../../report/run.js';
import { writeReport } from '../../report/write.js';
import { waistWithSections } from '../../report/sections/fromEvents.js';
import { filesSource } from '../../engines/types.js';
import { resolveRules } from '../../rules/resolve.js';
import { intOption, rowLine } from '../common.js';
import { csvField, terminalText } from '../format.js';
import { writeFileAtomic } from '../../output/atomic.js';
import type { Io } from '../io.js';
import { formatExplain } from './explain.js';
import { GRAIN_NOUN } from '../../periods/calendar.js';
import { formatProjection } from './project.js';
import { headline } from './report.js';
import { stateLabelsOf, stateWithRole } from '../../waist/manifest.js';
import { baseState } from '../../lifecycle/states.js';

export interface DemoOptions {
  out: string;
  events?: string;
  seed: string;
  generatedAt?: string;
}

/** The demo's scenarios: keep more lapsing members, and an open day's newcomers. */
/** The demo's scenarios, built from the roles of the states (no state is named outside src/lifecycle). */
export const DEMO_SCENARIOS = [`keep-lapsers=${baseState('lapse')}->${baseState('exit')}*0.8`, `open-day=+1500 ${baseState('arrival')} at +4`];

const weekLabel = (w: number) => new Date(DEMO_START + w * 7 * 86_400_000).toISOString().slice(0, 10);

export async function runDemo(o: DemoOptions, io: Io & { stdoutIsTTY?: boolean }): Promise<void> {
  const seed = intOption(o.seed, '--seed', 0);
  // the raw events (with member ids) go beside the report folder, never into it
  const eventsFile = o.events ?? join(dirname(o.out), `${o.out.replace(/\/+$/, '').split('/').pop()}-input`, 'events.csv');
  const lines: string[] = ['user_id,timestamp,event,plan,channel'];
  const { members, events } = simulateMakerspace(seed, (e) => lines.push([e.user_id, e.timestamp, e.event, e.plan, e.channel].map(csvField).join(',')));
  writeFileAtomic(eventsFile, `${lines.join('\n')}\n`);
  io.stderr(terminalText(`demo: ${members.toLocaleString('en-US')} members, ${events.toLocaleString('en-US')} events of a fictional makerspace → ${eventsFile}\n`));

  const rules = resolveRules();
  const base = weekLabel(CHANGE_WEEK - 1); // retention into the week before the change
  const compare = weekLabel(PROMO_WEEK + 1); // retention into the week after the promotion
  const full = await waistWithSections(filesSource([eventsFile]), rules, { by: 'channel' });
  const { model, waist } = reportOf(full, { base, compare, scenarios: DEMO_SCENARIOS });
  io.stderr(`${rowLine(waist.manifest.rows)}\n`);
  const files = await writeReport(model, o.out, o.generatedAt ?? new Date().toISOString());
  io.stderr(terminalText(`demo: report written to ${o.out}/index.html (${files.length} files)\n`));

  const explained = explainRetention(waist.tables, { base, compare, grainWord: `one-${GRAIN_NOUN[rules.grain]}`, minCell: rules.minCell, stateLabels: stateLabelsOf(waist.manifest.states) });
  const exit = stateWithRole(waist.manifest.states, 'exit');
  const scheme = { grain: rules.grain, weekStart: rules.weekStart };
  const projection = computeProjection({ tables: waist.tables }, { fit: '8', horizon: 12, scenarios: DEMO_SCENARIOS, moves: lifecycleMoves(rules), until: exit, samples: 300, seed: 1, band: [10, 90], backtestHorizon: 8, scheme });
  const colour = Boolean(io.stdoutIsTTY);
  io.stdout([
    headline(model, colour),
    `== Why retention moved (the planted change: new onboarding, and a change for long-standing members, from ${weekLabel(CHANGE_WEEK)}; a promotion in ${weekLabel(PROMO_WEEK)})`,
    formatExplain(explained, 'table'),
    '== The audience in 12 weeks, and two scenarios: a fifth fewer lapsing members go dormant; an open day brings 1,500 newcomers in week 4',
    formatProjection(projection, 'table'),
  ].join('\n'));
}

export function demoCommand(program: Command, io: Io): void {
  program
    .command('demo')
    .description('simulate a fictional makerspace booking log (about 20,000 members, 30 weeks) and run the main job on it')
    .option('--out <dir>', 'report folder to write', 'reports/demo')
    .option('--events <file>', 'where to write the simulated events (default: beside the report, in <dir>-input/)')
    .option('--seed <n>', 'random seed of the simulation', '20260504')
    .action((o: DemoOptions) => runDemo(o, io));
}

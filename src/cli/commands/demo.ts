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
import { buildReport } from '../../report/build.js';
import { writeReport } from '../../report/write.js';
import { loadRulesFile } from '../../rules/load.js';
import { DEFAULT_RULES, intOption, rowLine } from '../common.js';
import { csvField, terminalText } from '../format.js';
import { writeFileAtomic } from '../../output/atomic.js';
import type { Io } from '../io.js';
import { formatExplain } from './explain.js';
import { GRAIN_NOUN } from '../../periods/calendar.js';
import { formatProjection } from './project.js';
import { headline, reportRun } from './report.js';

export interface DemoOptions {
  out: string;
  events?: string;
  seed: string;
  generatedAt?: string;
}

/** The demo's scenarios: keep more lapsing members, and an open day's newcomers. */
export const DEMO_SCENARIOS = ['keep-lapsers=lapsing->dormant*0.8', 'open-day=+1500 fresh at +4'];

const weekLabel = (w: number) => new Date(DEMO_START + w * 7 * 86_400_000).toISOString().slice(0, 10);

export async function runDemo(o: DemoOptions, io: Io & { stdoutIsTTY?: boolean }): Promise<void> {
  const seed = intOption(o.seed, '--seed', 0);
  // the raw events (with member ids) go beside the report folder, never into it
  const eventsFile = o.events ?? join(dirname(o.out), `${o.out.replace(/\/+$/, '').split('/').pop()}-input`, 'events.csv');
  const lines: string[] = ['user_id,timestamp,event,plan,channel'];
  const { members, events } = simulateMakerspace(seed, (e) => lines.push([e.user_id, e.timestamp, e.event, e.plan, e.channel].map(csvField).join(',')));
  writeFileAtomic(eventsFile, `${lines.join('\n')}\n`);
  io.stderr(terminalText(`demo: ${members.toLocaleString('en-US')} members, ${events.toLocaleString('en-US')} events of a fictional makerspace → ${eventsFile}\n`));

  const rules = loadRulesFile(DEFAULT_RULES);
  const base = weekLabel(CHANGE_WEEK - 1); // retention into the week before the change
  const compare = weekLabel(PROMO_WEEK + 1); // retention into the week after the promotion
  const { result, dropped } = await reportRun({ events: [eventsFile], by: 'channel' }, rules);
  io.stderr(`${rowLine(result.rows)}\n`);
  const model = buildReport(result, rules, { base, compare, droppedPartial: dropped, scenarios: DEMO_SCENARIOS });
  const files = await writeReport(model, o.out, o.generatedAt ?? new Date().toISOString());
  io.stderr(terminalText(`demo: report written to ${o.out}/index.html (${files.length} files)\n`));

  const explained = explainRetention(result.waist, { base, compare, grainWord: `one-${GRAIN_NOUN[rules.grain]}`, minCell: rules.minCell });
  const scheme = { grain: rules.grain, weekStart: rules.weekStart };
  const projection = computeProjection({ tables: result.waist }, { fit: '8', horizon: 12, scenarios: DEMO_SCENARIOS, moves: lifecycleMoves(rules), until: 'dormant', samples: 300, seed: 1, band: [10, 90], backtestHorizon: 8, scheme });
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

/** `tidemark demo`: write the demo event log (a fictional makerspace) and run the main job on it. */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Command } from 'commander';
import { simulateMakerspace } from '../../demo/makerspace.js';
import { MemoryEngine } from '../../engines/memory.js';
import { loadRulesFile } from '../../rules/load.js';
import { DEFAULT_RULES, intOption, rowLine } from '../common.js';
import { json } from '../format.js';
import type { Io } from '../io.js';
import { flowsOutput, formatFlows } from './flows.js';
import { csvField } from '../format.js';

export interface DemoOptions {
  out: string;
  seed: string;
  quiet?: boolean;
}

export async function runDemo(o: DemoOptions, io: Io): Promise<void> {
  const seed = intOption(o.seed, '--seed', 0);
  mkdirSync(o.out, { recursive: true });
  const eventsFile = join(o.out, 'events.csv');
  const lines: string[] = ['user_id,timestamp,event,plan,channel'];
  const { members, events } = simulateMakerspace(seed, (e) => lines.push([e.user_id, e.timestamp, e.event, e.plan, e.channel].map(csvField).join(',')));
  writeFileSync(eventsFile, `${lines.join('\n')}\n`);
  io.stderr(`demo: ${members.toLocaleString('en-US')} members, ${events.toLocaleString('en-US')} events of a fictional makerspace → ${eventsFile}\n`);
  const rules = loadRulesFile(DEFAULT_RULES);
  const result = await new MemoryEngine().run({ files: [eventsFile] }, rules);
  io.stderr(`${rowLine(result.rows)}\n`);
  const flows = flowsOutput(result, rules);
  writeFileSync(join(o.out, 'flows.json'), json(flows));
  writeFileSync(join(o.out, 'flows.csv'), formatFlows(flows, 'csv'));
  const table = formatFlows(flows, 'table');
  writeFileSync(join(o.out, 'flows.txt'), table);
  io.stdout(table);
  io.stderr(`demo: wrote ${o.out}/flows.json, flows.csv, flows.txt\n`);
}

export function demoCommand(program: Command, io: Io): void {
  program
    .command('demo')
    .description('simulate a fictional makerspace booking log (about 20,000 members, 30 weeks) and run the main job on it')
    .option('--out <dir>', 'folder to write into', 'reports/demo')
    .option('--seed <n>', 'random seed of the simulation', '20260504')
    .action((o: DemoOptions) => runDemo(o, io));
}

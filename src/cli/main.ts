/**
 * The tidemark command line. `main(argv, io)` returns the exit code, so tests run commands without
 * spawning a process: commander's exit is overridden and its output routed to `io`.
 */
import { Command, CommanderError } from 'commander';
import { commanderMessage, reportError } from './errors.js';
import type { Io } from './io.js';
import { classifyCommand } from './commands/classify.js';
import { demoCommand } from './commands/demo.js';
import { cohortsCommand } from './commands/cohorts.js';
import { curveCommand } from './commands/curve.js';
import { explainCommand } from './commands/explain.js';
import { flowsCommand } from './commands/flows.js';
import { grainCommand } from './commands/grain.js';
import { earlyCommand } from './commands/early.js';
import { habitsCommand } from './commands/habits.js';
import { rfmCommand } from './commands/rfm.js';
import { inspectCommand } from './commands/inspect.js';
import { projectCommand } from './commands/project.js';
import { reportCommand } from './commands/report.js';
import { retentionCommand } from './commands/retention.js';
import { rulesCommand } from './commands/rules.js';
import { survivalCommand } from './commands/survival.js';

export function buildProgram(io: Io): Command {
  const program = new Command('tidemark')
    .description('User-lifecycle analytics: states per period, flows between them, retention explained, audience projected.')
    .version('0.1.0')
    .option('--debug', 'show stack traces for errors')
    .showSuggestionAfterError(true)
    .exitOverride()
    .configureOutput(output(io));
  classifyCommand(program, io);
  flowsCommand(program, io);
  retentionCommand(program, io);
  explainCommand(program, io);
  projectCommand(program, io);
  cohortsCommand(program, io);
  survivalCommand(program, io);
  curveCommand(program, io);
  // the behaviour commands: they read events with detail, not the waist
  inspectCommand(program, io);
  earlyCommand(program, io);
  habitsCommand(program, io);
  rfmCommand(program, io);
  grainCommand(program, io);
  reportCommand(program, io);
  demoCommand(program, io);
  rulesCommand(program, io);
  for (const c of program.commands) applyOverrides(c, io);
  return program;
}

/** Help to stdout; commander's errors are not printed by commander but by main, as one escaped line. */
function output(io: Io) {
  return { writeOut: (s: string) => io.stdout(s), writeErr: (s: string) => io.stderr(s), outputError: () => {} };
}

function applyOverrides(cmd: Command, io: Io): void {
  cmd.exitOverride().configureOutput(output(io)).showSuggestionAfterError(true);
  for (const c of cmd.commands) applyOverrides(c, io);
}

export async function main(argv: string[], io: Io): Promise<number> {
  const debug = argv.includes('--debug');
  const program = buildProgram(io);
  try {
    await program.parseAsync(argv, { from: 'user' });
    return 0;
  } catch (err) {
    if (err instanceof CommanderError) {
      // help and version exit 0; everything else commander rejects is a usage error
      if (err.code === 'commander.helpDisplayed' || err.code === 'commander.version' || err.code === 'commander.help') return 0;
      if (err.code === 'commander.executeSubCommandAsync') return 0;
      io.stderr(`tidemark: ${commanderMessage(err.message)}\n`);
      return 2;
    }
    return reportError(err, io, debug);
  }
}

/**
 * The tidemark command line. `main(argv, io)` returns the exit code, so tests run commands without
 * spawning a process: commander's exit is overridden and its output routed to `io`.
 *
 * Start-up: every command is listed from the light table in `catalog.ts`; only the module of the
 * command that argv runs (or asks help for) is imported. `--help`, `--version` and a misspelt command
 * load no command module at all. Which command argv runs is guessed before parsing (`commandOf`); if
 * commander dispatches to another one, a hook stops it before it parses anything, and `runArgv` loads
 * that command and parses again.
 */
import { Command, CommanderError, Help } from 'commander';
import { CATALOG, commandOf, type RegisterCommand } from './catalog.js';
import { commanderMessage, reportError } from './errors.js';
import type { Io } from './io.js';

/**
 * The program with every command of the catalogue: the ones in `loaded` with their options and
 * actions, the others as a name and a description (enough for the top-level help and "did you mean").
 */
export function buildProgram(io: Io, loaded: ReadonlyMap<string, RegisterCommand> = new Map()): Command {
  const terms = new Map(CATALOG.map((c) => [c.name, c.term]));
  const program = new Command('tidemark')
    .description('User-lifecycle analytics: states per period, flows between them, retention explained, audience projected.')
    .version('0.1.0')
    .option('--debug', 'show stack traces for errors')
    .showSuggestionAfterError(true)
    .exitOverride()
    .configureOutput(output(io))
    // the table's term, so that the listing reads the same whether or not a command is loaded
    .configureHelp({ subcommandTerm: (cmd) => terms.get(cmd.name()) ?? new Help().subcommandTerm(cmd) });
  for (const entry of CATALOG) {
    const register = loaded.get(entry.name);
    if (register) register(program, io);
    else program.addCommand(new Command(entry.name).description(entry.description));
  }
  program.hook('preSubcommand', (_, sub) => {
    if (!loaded.has(sub.name())) throw new NotLoaded(sub.name());
  });
  for (const c of program.commands) applyOverrides(c, io);
  return program;
}

/** Thrown before a command that is listed but not loaded parses its arguments. */
export class NotLoaded extends Error {
  constructor(readonly command: string) {
    super(`the command '${command}' is not loaded`);
  }
}

/**
 * Parses argv with `program` and runs the command; when commander reaches a command the program lists
 * without having loaded it (the guess of `commandOf` missed), loads that command and parses again.
 */
export async function runArgv(program: Command, argv: readonly string[], io: Io): Promise<void> {
  try {
    await program.parseAsync(argv, { from: 'user' });
  } catch (err) {
    if (!(err instanceof NotLoaded)) throw err;
    const entry = CATALOG.find((c) => c.name === err.command)!;
    await buildProgram(io, new Map([[entry.name, await entry.load()]])).parseAsync(argv, { from: 'user' });
  }
}

/** The program with the command argv names loaded (none for `--help`, `--version`, a misspelling). */
export async function programFor(argv: readonly string[], io: Io): Promise<Command> {
  const name = commandOf(argv);
  const entry = CATALOG.find((c) => c.name === name);
  return buildProgram(io, new Map(entry ? [[entry.name, await entry.load()]] : []));
}

/** The program with every command loaded (for checks that walk all commands and options). */
export async function fullProgram(io: Io): Promise<Command> {
  const all = await Promise.all(CATALOG.map(async (c) => [c.name, await c.load()] as const));
  return buildProgram(io, new Map(all));
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
  try {
    await runArgv(await programFor(argv, io), argv, io);
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

/**
 * The light table of commands (src/cli/catalog.ts): it agrees with what each command module declares,
 * covers every module in src/cli/commands, and `main` imports only the module of the command it runs.
 * What is checked against: commander's own help (`Help.subcommandTerm`, the listing it prints) and
 * the folder on disk.
 */
import { readdirSync } from 'node:fs';
import { Command, Help } from 'commander';
import { describe, expect, it, vi } from 'vitest';
import { CATALOG, commandOf } from '../../src/cli/catalog.js';
import { bufferIo } from '../../src/cli/io.js';
import { buildProgram, fullProgram, main, NotLoaded, runArgv } from '../../src/cli/main.js';

describe('CATALOG', () => {
  it.each(CATALOG.map((c) => [c.name, c] as const))('%s: the module registers one command with the table\'s name, term and description', async (_, entry) => {
    const program = new Command('tidemark');
    (await entry.load())(program, bufferIo());
    expect(program.commands).toHaveLength(1);
    const cmd = program.commands[0];
    expect(cmd.name()).toBe(entry.name);
    expect(cmd.description()).toBe(entry.description);
    expect(new Help().subcommandTerm(cmd)).toBe(entry.term);
  });

  it('lists every module of src/cli/commands, once, and nothing else', () => {
    const modules = readdirSync(new URL('../../src/cli/commands/', import.meta.url)).filter((f) => f.endsWith('.ts')).map((f) => f.slice(0, -3));
    expect(CATALOG.map((c) => c.name).sort()).toEqual(modules.sort());
  });

  it('the top-level help reads the same with no command loaded as with all of them loaded', async () => {
    const light = bufferIo();
    const full = bufferIo();
    buildProgram(light).outputHelp();
    (await fullProgram(full)).outputHelp();
    expect(light.out).toBe(full.out);
    for (const c of CATALOG) expect(light.out).toContain(c.term);
  });
});

describe('commandOf(argv)', () => {
  it.each([
    [['flows', '--events', 'x.csv'], 'flows'],
    [['--debug', 'report', '--out', 'r'], 'report'],
    [['help', 'rules'], 'rules'],
    [['--debug', 'help', 'curve'], 'curve'],
    [['rules', 'check', 'a.yaml'], 'rules'],
    [['--', 'demo'], 'demo'],
    [['--colour', 'auto', 'flows'], 'flows'], // a value of a program option that may come one day
    [['flws', '--events', 'flows.csv'], undefined],
    [[], undefined],
    [['--help'], undefined],
    [['--version'], undefined],
    [['help'], undefined],
    [['flws'], undefined],
    [['help', 'flws'], undefined],
  ] as const)('%j → %s', (argv, name) => {
    expect(commandOf(argv)).toBe(name);
  });
});

describe('main loads only the command it runs', () => {
  /** Runs main with every entry's loader spied on; returns the exit code, output and the names loaded. */
  async function run(...argv: string[]) {
    const spies = CATALOG.map((c) => [c.name, vi.spyOn(c, 'load')] as const);
    const io = bufferIo();
    const code = await main(argv, io);
    const loaded = spies.filter(([, s]) => s.mock.calls.length > 0).map(([n]) => n);
    vi.restoreAllMocks();
    return { code, out: io.out, err: io.err, loaded };
  }

  it('--version and --help load no command', async () => {
    const v = await run('--version');
    expect([v.code, v.out, v.loaded]).toEqual([0, '0.1.0\n', []]);
    const h = await run('--help');
    expect(h.code).toBe(0);
    expect(h.loaded).toEqual([]);
    for (const c of CATALOG) expect(h.out).toContain(c.description.slice(0, 30));
  });

  it('a misspelt command loads nothing and still gets "did you mean" (exit 2)', async () => {
    const r = await run('flws');
    expect([r.code, r.err, r.loaded]).toEqual([2, "tidemark: unknown command 'flws' (did you mean flows?)\n", []]);
  });

  it('`<cmd> --help` and `help <cmd>` load that command alone and print its options', async () => {
    const a = await run('flows', '--help');
    expect([a.code, a.loaded]).toEqual([0, ['flows']]);
    expect(a.out).toContain('--events');
    const b = await run('help', 'rules');
    expect([b.code, b.loaded]).toEqual([0, ['rules']]);
    expect(b.out).toMatch(/check <files\.\.\.>/);
  });

  it('a misspelt subcommand and an unknown option are still usage errors of the loaded command (exit 2)', async () => {
    const r = await run('rules', 'chek');
    expect([r.code, r.err, r.loaded]).toEqual([2, "tidemark: unknown command 'chek' (did you mean check?)\n", ['rules']]);
    const o = await run('flows', '--evnts', 'x.csv');
    expect([o.code, o.loaded]).toEqual([2, ['flows']]);
    expect(o.err).toMatch(/unknown option '--evnts' \(did you mean --events\?\)/);
  });
});

describe('when the guess misses: a program with no command loaded', () => {
  it('stops before the listed command parses anything (so its options are not "unknown")', async () => {
    const parsing = buildProgram(bufferIo()).parseAsync(['curve', '--alive', '1000,631'], { from: 'user' });
    await expect(parsing).rejects.toBeInstanceOf(NotLoaded);
    await expect(parsing).rejects.toMatchObject({ command: 'curve' });
  });

  it('runArgv loads the command commander dispatched to and runs it', async () => {
    const io = bufferIo();
    // Fader & Hardie (2007), regular customers, years 0–7: α 0.704, β 1.182 (test/fixtures/published-values.md)
    await runArgv(buildProgram(io), ['curve', '--alive', '1000,631,468,382,326,289,262,241', '--format', 'json'], io);
    const fit = JSON.parse(io.out);
    expect(fit.alpha).toBeCloseTo(0.704, 3);
    expect(fit.beta).toBeCloseTo(1.182, 3);
  });
});

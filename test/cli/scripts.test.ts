/**
 * Every package.json script refers to things that exist: the files it runs, the binaries it calls,
 * the scripts it runs with `npm run`, the config `tsc -p` reads, and, for `node src/cli/bin.js …`, a
 * tidemark command and options that the command line defines. Nothing heavy is run: commands are
 * looked up in the commander program (every command loaded), files on disk.
 */
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Command } from 'commander';
import { describe, expect, it } from 'vitest';
import { bufferIo } from '../../src/cli/io.js';
import { fullProgram } from '../../src/cli/main.js';

const ROOT = fileURLToPath(new URL('../..', import.meta.url));
const pkg = JSON.parse(readFileSync(join(ROOT, 'package.json'), 'utf8')) as { scripts: Record<string, string>; bin: Record<string, string> };

const program = await fullProgram(bufferIo());

/** What is wrong with one script line (empty when nothing is). */
function problems(script: string): string[] {
  const out: string[] = [];
  for (const part of script.split(/&&|\|\||;/).map((s) => s.trim()).filter(Boolean)) {
    const [bin, ...args] = part.split(/\s+/);
    if (bin === 'node' || bin === 'tsx') {
      const file = args[0];
      if (!file || !existsSync(join(ROOT, file))) {
        out.push(`${part}: no file ${file}`);
        continue;
      }
      if (Object.values(pkg.bin).includes(file)) out.push(...cliProblems(args.slice(1)).map((p) => `${part}: ${p}`));
    } else if (bin === 'npm') {
      if (args[0] !== 'run' || !args[1]) out.push(`${part}: only \`npm run SCRIPT\` is checked`);
      else if (!(args[1] in pkg.scripts)) out.push(`${part}: no script ${args[1]}`);
    } else if (bin === 'tsc' && args[0] === '-p' && !existsSync(join(ROOT, args[1] ?? ''))) {
      out.push(`${part}: no file ${args[1]}`);
    } else if (!existsSync(join(ROOT, 'node_modules', '.bin', bin))) {
      out.push(`${part}: no binary ${bin} in node_modules/.bin`);
    }
  }
  return out;
}

/** The tidemark arguments name a command that does something, and only options it defines. */
function cliProblems(argv: string[]): string[] {
  let cmd: Command = program;
  let i = 0;
  for (; i < argv.length && !argv[i].startsWith('-'); i++) {
    const sub = cmd.commands.find((c) => c.name() === argv[i] || c.aliases().includes(argv[i]));
    if (!sub) return [`'${argv.slice(0, i + 1).join(' ')}' is not a tidemark command`];
    cmd = sub;
  }
  const out: string[] = [];
  if (cmd.commands.length > 0) out.push(`'${argv.slice(0, i).join(' ')}' needs a subcommand (${cmd.commands.map((c) => c.name()).join(', ')})`);
  const known = new Set([...cmd.options.map((o) => o.long), '--help', '--debug']);
  for (const a of argv.slice(i)) if (a.startsWith('--') && !known.has(a.split('=')[0])) out.push(`'${cmd.name()}' has no option ${a}`);
  return out;
}

describe('package.json scripts', () => {
  it.each(Object.entries(pkg.scripts))('%s refers to commands and files that exist', (_, script) => {
    expect(problems(script)).toEqual([]);
  });

  it('the check itself catches a missing command, a group without its subcommand, an unknown option and a missing file', () => {
    expect(problems('node src/cli/bin.js schema --out rules/rules.schema.json')).toEqual(["node src/cli/bin.js schema --out rules/rules.schema.json: 'schema' is not a tidemark command"]);
    expect(problems('node src/cli/bin.js rules --out x')[0]).toMatch(/'rules' needs a subcommand \(check, schema, diff\)/);
    expect(problems('node src/cli/bin.js demo --output x')[0]).toMatch(/'demo' has no option --output/);
    expect(problems('tsx test/bench/missing.ts')[0]).toMatch(/no file test\/bench\/missing\.ts/);
    expect(problems('no-such-tool --flag')[0]).toMatch(/no binary no-such-tool/);
    expect(problems('npm run no-such-script')[0]).toMatch(/no script no-such-script/);
    expect(problems('tsc -p src/missing.json')[0]).toMatch(/no file src\/missing\.json/);
  });
});

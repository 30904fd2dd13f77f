/** `tidemark rules check|schema|diff`: validate a rules file; print the JSON Schema for editors; compare two rules files on events. */
import type { Command } from 'commander';
import { loadRulesFile } from '../../rules/load.js';
import { rulesJsonSchema } from '../../rules/schema.js';
import { emit, json, terminalText } from '../format.js';
import type { Io } from '../io.js';

export function rulesCommand(program: Command, io: Io): void {
  const rules = program.command('rules').description('check rules files, print their JSON Schema, or compare two of them on the same events');
  rules
    .command('check')
    .description('validate rules files and print them with every default filled in')
    .argument('<files...>', 'rules files (YAML)')
    .action((files: string[]) => {
      for (const f of files) {
        const r = loadRulesFile(f);
        io.stderr(terminalText(`${f}: ok (${r.grain} grain, ${r.timezone}, lapseLimit ${r.lapseLimit})\n`));
        emit(json(r), undefined, io);
      }
    });
  rules
    .command('schema')
    .description('print the JSON Schema of rules files (editors use it to check and complete them)')
    .option('--out <file>', 'write to a file instead of standard output')
    .action((o: { out?: string }) => emit(json(rulesJsonSchema()), o.out, io));
  // diff reads events: its options and action come with the engine, loaded only when diff runs (or
  // shows its help), so that `rules check` and `rules schema` stay light
  const diff = rules
    .command('diff')
    .description('compare two rules files on the same events: user-periods by state under A and under B, and the headlines under each')
    .argument('<a>', 'rules file A (YAML)')
    .argument('<b>', 'rules file B (YAML)')
    .addHelpText('after', () => (diff.options.length === 0 ? '\nIts options (--events and the event options, --format, --out): tidemark rules diff --help\n' : ''));
  rules.hook('preSubcommand', async (_, sub) => {
    if (sub === diff && diff.options.length === 0) (await import('../rulesDiff.js')).configureRulesDiff(diff, io);
  });
}

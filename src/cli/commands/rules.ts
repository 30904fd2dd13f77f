/** `tidemark rules check|schema|diff`: validate a rules file; print the JSON Schema for editors; compare two rules files on events. */
import type { Command } from 'commander';
import { loadRulesFile } from '../../rules/load.js';
import { rulesJsonSchema } from '../../rules/schema.js';
import { emit, json, terminalText } from '../format.js';
import type { Io } from '../io.js';
import { addRulesDiff } from '../rulesDiff.js';

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
  addRulesDiff(rules, io);
}

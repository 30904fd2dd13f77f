/** The rules a run uses: a rules file (or the packaged default), with column names overridden. */
import { fileURLToPath } from 'node:url';
import { loadRulesFile } from './load.js';
import type { Rules } from './schema.js';

/** The packaged weekly rules, used when no rules file is given. */
export const DEFAULT_RULES = fileURLToPath(new URL('../../rules/weekly.yaml', import.meta.url));

export interface RulesChoice {
  /** A rules file; the packaged rules/weekly.yaml when absent. */
  file?: string;
  /** Input column names that replace the rules' own. */
  columns?: { user?: string; timestamp?: string; event?: string };
}

/** Load the chosen rules and apply the column overrides. @throws TidemarkError as loadRulesFile. */
export function resolveRules(choice: RulesChoice = {}): Rules {
  const rules = loadRulesFile(choice.file ?? DEFAULT_RULES);
  const c = choice.columns ?? {};
  return { ...rules, columns: { user: c.user ?? rules.columns.user, timestamp: c.timestamp ?? rules.columns.timestamp, event: c.event ?? rules.columns.event } };
}

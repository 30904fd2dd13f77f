/**
 * The light table of commands. `main` reads it to list every command (top-level help, "did you
 * mean") without importing any of them, and imports only the module of the command it runs: a command
 * module pulls in the engine, arquero, Vega and the rest, which cost about a second to load.
 *
 * `term` and `description` repeat what the command's own file declares (the term as commander's help
 * prints it: the name, `[options]` when it has options, its arguments); test/cli/catalog.test.ts fails
 * when they drift apart. The order is the order of the top-level help.
 */
import type { Command } from 'commander';
import type { Io } from './io.js';

/** Registers one command, with its options and action, on the program. */
export type RegisterCommand = (program: Command, io: Io) => void;

export interface CatalogEntry {
  name: string;
  term: string;
  description: string;
  load(): Promise<RegisterCommand>;
}

export const CATALOG: readonly CatalogEntry[] = [
  {
    name: 'classify',
    term: 'classify [options]',
    description: 'the lifecycle state of every user in every period (CSV: user_id,period,state)',
    load: async () => (await import('./commands/classify.js')).classifyCommand,
  },
  {
    name: 'flows',
    term: 'flows [options]',
    description: 'transition counts and rates between lifecycle states, period by period, with retention and growth accounting',
    load: async () => (await import('./commands/flows.js')).flowsCommand,
  },
  {
    name: 'retention',
    term: 'retention [options]',
    description: 'retention per period by prior state (and tenure band), with Wilson 95% intervals and small-cell flags',
    load: async () => (await import('./commands/retention.js')).retentionCommand,
  },
  {
    name: 'explain',
    term: 'explain [options]',
    description: 'why overall retention moved between two periods: rate versus mix effects by prior state, tenure and attribute',
    load: async () => (await import('./commands/explain.js')).explainCommand,
  },
  {
    name: 'project',
    term: 'project [options]',
    description: 'project the state mix with a Markov chain fitted from the flows (or your own matrix): long run, bands, what-ifs, backtest',
    load: async () => (await import('./commands/project.js')).projectCommand,
  },
  {
    name: 'cohorts',
    term: 'cohorts [options]',
    description: 'acquisition cohorts: the retention triangle, N-period, on-or-after and window retention, grouped curves and shape readings',
    load: async () => (await import('./commands/cohorts.js')).cohortsCommand,
  },
  {
    name: 'survival',
    term: 'survival [options]',
    description: 'Kaplan-Meier curves of the time from first active to first dormant, with the log-rank test across groups',
    load: async () => (await import('./commands/survival.js')).survivalCommand,
  },
  {
    name: 'curve',
    term: 'curve [options]',
    description: 'fit the shifted-beta-geometric model to cohort survivors (not yet dormant) and project the curve',
    load: async () => (await import('./commands/curve.js')).curveCommand,
  },
  {
    name: 'inspect',
    term: 'inspect [options]',
    description: 'check the data before any analysis: span and stray timestamps, missing days, duplicates, heavy users, per-person columns, time zones, event names, grain',
    load: async () => (await import('./commands/inspect.js')).inspectCommand,
  },
  {
    name: 'early',
    term: 'early [options]',
    description: 'early signals: events in a newcomer\'s first periods that go with being retained later (lift, Wilson and Newcombe intervals, Benjamini–Hochberg)',
    load: async () => (await import('./commands/early.js')).earlyCommand,
  },
  {
    name: 'habits',
    term: 'habits [options]',
    description: 'habit profiles: what long-tenured users keep doing, against users who went dormant early',
    load: async () => (await import('./commands/habits.js')).habitsCommand,
  },
  {
    name: 'rfm',
    term: 'rfm [options]',
    description: 'RFM segments: recency, frequency and value scored in quintiles each period, segments, and the flows between them as a Markov chain',
    load: async () => (await import('./commands/rfm.js')).rfmCommand,
  },
  {
    name: 'grain',
    term: 'grain [options]',
    description: 'grain advisor: the days between a user\'s active days, and the grain (day, week, month) and lapse limit they suggest',
    load: async () => (await import('./commands/grain.js')).grainCommand,
  },
  {
    name: 'audience',
    term: 'audience [options]',
    description: 'list the users who entered a lifecycle state at a period, with previous state, tenure, last active period and attributes (personal data)',
    load: async () => (await import('./commands/audience.js')).audienceCommand,
  },
  {
    name: 'report',
    term: 'report [options]',
    description: 'write the lifecycle report: a self-contained HTML page, summary.md, digest.txt and the data behind every chart',
    load: async () => (await import('./commands/report.js')).reportCommand,
  },
  {
    name: 'waist',
    term: 'waist [options]',
    description: 'write the waist: the count tables every analysis reads (manifest.json and CSV tables, and Parquet copies with --engine duckdb), for --waist DIR',
    load: async () => (await import('./commands/waist.js')).waistCommand,
  },
  {
    name: 'sql',
    term: 'sql [options]',
    description: 'write the rules as SQL for a warehouse: one query a waist table, the manifest, and a README on exporting the results for --waist',
    load: async () => (await import('./commands/sql.js')).sqlCommand,
  },
  {
    name: 'update',
    term: 'update [options]',
    description: 'apply new event files to a store (created when missing) and print what changed since the last update',
    load: async () => (await import('./commands/update.js')).updateCommand,
  },
  {
    name: 'demo',
    term: 'demo [options]',
    description: 'simulate a fictional makerspace booking log (about 20,000 members, 30 weeks) and run the main job on it',
    load: async () => (await import('./commands/demo.js')).demoCommand,
  },
  {
    name: 'rules',
    term: 'rules',
    description: 'check rules files, print their JSON Schema, or compare two of them on the same events',
    load: async () => (await import('./commands/rules.js')).rulesCommand,
  },
];

/**
 * The command that `argv` most likely runs or asks help for: the first argument, not an option, that
 * names a command of the catalogue (`tidemark help flows` gives flows; an option's value before the
 * command is skipped unless it is itself a command's name). Undefined when argv names none (no
 * command, or a misspelt one: commander then lists or suggests from the table). A guess only: `main`
 * loads the command commander actually dispatches to when the guess misses.
 * @example commandOf(['--debug', 'help', 'flows']) // 'flows'
 */
export function commandOf(argv: readonly string[]): string | undefined {
  return argv.find((a) => !a.startsWith('-') && CATALOG.some((c) => c.name === a));
}

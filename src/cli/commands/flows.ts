/** `tidemark flows`: transition matrices, status-split retention and growth accounting per period. */
import type { Command } from 'commander';
import { summariseFlows, type FlowsSummary } from '../../flows/summary.js';
import type { Waist } from '../../waist/types.js';
import { addEventOptions, addFormatOptions, addWaistOption, analysisInput, type CommonOptions } from '../common.js';
import { asFlags, selectionOption } from '../options.js';
import { emit, json, pct, textTable, toCsv, type Format, wrapProse } from '../format.js';
import type { Io } from '../io.js';

export interface FlowsOptions extends CommonOptions {
  pool?: string;
}

export interface FlowsOutput extends FlowsSummary {
  rules: { name?: string; version?: string; grain: string; timezone: string };
  rows: Waist['manifest']['rows'];
  /** The last period; flows never leave it out (`leftOut` false), they note when it is incomplete. */
  lastPeriod: Waist['manifest']['lastPeriod'] & { leftOut: false };
  users: number;
}

/** The flows of a waist, with its rules, row accounting and last period. */
export function flowsOutput(w: Waist, pool?: string): FlowsOutput {
  const r = w.manifest.rules;
  return {
    rules: { name: r.name ?? undefined, version: r.version ?? undefined, grain: r.grain, timezone: r.timezone },
    ...summariseFlows(w.tables, pool),
    rows: w.manifest.rows,
    lastPeriod: { ...w.manifest.lastPeriod, leftOut: false },
    users: w.manifest.users,
  };
}

export function formatFlows(f: FlowsOutput, format: Format): string {
  if (format === 'json') return json(f);
  if (format === 'csv') {
    const rows: unknown[][] = [];
    for (const t of f.transitions) {
      f.states.forEach((from, i) => f.states.forEach((to, j) => {
        if (t.counts[i][j] > 0) rows.push([t.from, t.to, from, to, t.counts[i][j], t.rates[i]?.[j] ?? '']);
      }));
    }
    return toCsv(['period_from', 'period_to', 'state_from', 'state_to', 'users', 'rate'], rows);
  }
  return flowsTable(f);
}

function flowsTable(f: FlowsOutput): string {
  const out: string[] = [];
  const head = f.rules.name ? `${f.rules.name}${f.rules.version ? ` v${f.rules.version}` : ''}` : `${f.rules.grain} rules`;
  out.push(`${head} · ${f.periods.length} periods ${f.periods[0]} to ${f.periods[f.periods.length - 1]} · ${f.users.toLocaleString('en-US')} users`);
  if (f.warmupPeriods.length) out.push(`warm-up (left out of flows): ${f.warmupPeriods.join(', ')}`);
  if (!f.lastPeriod.complete) out.push(`note: the last period ${f.lastPeriod.label} looks incomplete (data stop ${pct(f.lastPeriod.coverage, 0)} of the way through it)`);
  const last = f.transitions[f.transitions.length - 1];
  if (last) {
    out.push('', `Latest transition ${last.from} -> ${last.to}: users (row share)`);
    const rows = f.states.map((s, i) => {
      const n = last.counts[i].reduce((a, b) => a + b, 0);
      return [s, ...last.counts[i].map((c, j) => (n === 0 ? '-' : `${c} ${pct(last.rates[i]?.[j], 0)}`)), n];
    });
    rows.push(['(new)', last.fresh, ...f.states.slice(1).map(() => '-'), last.fresh]);
    out.push(textTable(['from\\to', ...f.states, 'n'], rows).trimEnd());
  }
  out.push('', 'Per period: active users, inflow, losses, quick ratio, retention by prior state');
  const rows = f.transitions.map((t) => [
    t.to,
    t.growth.activeAfter,
    t.fresh,
    t.growth.returned,
    t.growth.newlyInactive,
    t.growth.quickRatio === null ? '-' : t.growth.quickRatio.toFixed(2),
    ...f.activeStates.map((s) => pct(t.retention[s]?.rate)),
  ]);
  out.push(textTable(['into', 'active', 'new', 'back', 'lost', 'quick', ...f.activeStates.map((s) => `r.${s}`)], rows).trimEnd());
  if (f.pooled) {
    out.push('', `Pooled ${f.pooled.transitions} transitions (${f.pooled.from} to ${f.pooled.to}): row shares`);
    const pr = f.states.map((s, i) => [s, ...f.states.map((_, j) => (f.pooled!.rates[i] ? pct(f.pooled!.rates[i]![j]) : '-')), f.pooled!.n[i]]);
    out.push(textTable(['from\\to', ...f.states, 'n'], pr).trimEnd());
  }
  return wrapProse(`${out.join('\n')}\n`);
}

export async function runFlows(o: FlowsOptions, io: Io): Promise<void> {
  if (o.pool !== undefined) selectionOption(o.pool, '--pool');
  const { waist } = await analysisInput(o, io, { partial: 'keep' });
  const out = asFlags(() => flowsOutput(waist, o.pool), { range: '--pool' });
  emit(formatFlows(out, o.format), o.out, io);
}

export function flowsCommand(program: Command, io: Io): void {
  const cmd = program
    .command('flows')
    .description('transition counts and rates between lifecycle states, period by period, with retention and growth accounting')
    .option('--pool <range>', 'transitions to pool into one matrix: all, N (the last N) or FROM..TO (period labels; either side may be empty)', 'all');
  addFormatOptions(addEventOptions(addWaistOption(cmd)), 'table').action((opts: FlowsOptions) => runFlows(opts, io));
}

/**
 * One plain-English sentence from a Kitagawa decomposition of a retention change, e.g.
 *   "Overall one-week retention fell 1.8 points: veterans' own retention cost 2.6, newcomers' gained
 *    0.9, the shift toward newcomers cost 0.1."
 *
 * Rules: values are percentage points (rate × 100) rounded to one decimal; the parts are each
 * group's rate effect and the total mix effect, ordered by magnitude; a part under 0.05 points is
 * left out; a change under 0.05 points is told as no change ("held steady"), still naming the parts
 * that cancel. The mix part is named after the group whose share grew most.
 *
 * The parts are an accounting identity, not causes. When the groups are told apart by a behaviour
 * (say, members who booked a workshop in their first week), a higher rate among them is a
 * correlation with staying, not proof that the behaviour makes members stay; pass
 * `behaviouralGroups: true` and the sentence says so.
 */
import type { KitagawaResult } from './kitagawa.js';
import { BASE_STATES } from '../lifecycle/states.js';

/** Display names of the base active states (the table of states in src/lifecycle/states.ts). */
export const DEFAULT_STATE_LABELS: Readonly<Record<string, string>> = Object.fromEntries(BASE_STATES.filter((s) => s.active).map((s) => [s.name, s.label]));

export interface SentenceOptions {
  /** The grain word, e.g. 'one-week', 'one-day', 'one-month'. */
  grain: string;
  /** Display names by group key; a key without one is shown as is. Default {@link DEFAULT_STATE_LABELS}. */
  labels?: Readonly<Record<string, string>>;
  /** What the rate measures; default 'retention'. */
  measure?: string;
  /** The groups are defined by a behaviour: add the sentence that association is not cause. */
  behaviouralGroups?: boolean;
  /**
   * The group keys identify people (a per-person column): name no group; tell the total rate effect
   * ("changes within the groups") and the total mix effect ("the shift between groups") only.
   */
  unnamedGroups?: boolean;
}

const NEGLIGIBLE = 0.05;

/** Percentage points rounded to one decimal, as text without sign. */
function points(value: number): string {
  return (Math.round(Math.abs(value) * 1000) / 10).toFixed(1);
}

function possessive(label: string): string {
  return label.endsWith('s') ? `${label}'` : `${label}'s`;
}

/**
 * The sentence for `result`.
 *
 * @example decompositionSentence(kitagawaFromCounts([...]), { grain: 'one-week', labels: { old: 'veterans', new: 'newcomers' } })
 *   // "Overall one-week retention fell 1.8 points: veterans' own retention cost 2.6, newcomers' gained 0.9, the shift toward newcomers cost 0.1."
 */
export function decompositionSentence(result: KitagawaResult, options: SentenceOptions): string {
  const labels = options.labels ?? DEFAULT_STATE_LABELS;
  const measure = options.measure ?? 'retention';
  const name = (key: string): string => labels[key] ?? key;
  const subject = `Overall ${options.grain} ${measure}`;
  if (result.change === null || result.rateEffect === null || result.mixEffect === null) {
    const empty = result.totalBase > 0 ? 'the later period' : result.totalCompare > 0 ? 'the earlier period' : 'either period';
    return `${subject} cannot be compared: there are no users in ${empty}.`;
  }

  const mix = result.mixEffect;
  const grower = [...result.groups].sort((a, b) => b.weightCompare - b.weightBase - (a.weightCompare - a.weightBase))[0];
  const parts = (options.unnamedGroups
    ? [{ kind: 'within' as const, label: '', value: result.rateEffect }, { kind: 'between' as const, label: '', value: mix }]
    : [
      ...result.groups.map((g) => ({ kind: 'rate' as const, label: name(g.key), value: g.rateEffect ?? 0 })),
      ...(grower ? [{ kind: 'mix' as const, label: name(grower.key), value: mix }] : []),
    ])
    .filter((p) => Math.abs(p.value) * 100 >= NEGLIGIBLE)
    .sort((a, b) => Math.abs(b.value) - Math.abs(a.value));
  const firstRate = parts.findIndex((p) => p.kind === 'rate');
  const texts = parts.map((p, i) => {
    const verb = `${p.value < 0 ? 'cost' : 'gained'} ${points(p.value)}`;
    if (p.kind === 'mix') return `the shift toward ${p.label} ${verb}`;
    if (p.kind === 'within') return `changes within the groups ${verb}`;
    if (p.kind === 'between') return `the shift between groups ${verb}`;
    return `${possessive(p.label)}${i === firstRate ? ` own ${measure}` : ''} ${verb}`;
  });

  const pts = result.change * 100;
  const head =
    Math.abs(pts) < NEGLIGIBLE
      ? `${subject} held steady`
      : `${subject} ${pts < 0 ? 'fell' : 'rose'} ${points(result.change)} ${points(result.change) === '1.0' ? 'point' : 'points'}`;
  let sentence: string;
  if (texts.length > 0) sentence = `${head}: ${texts.join(', ')}.`;
  else if (Math.abs(pts) < NEGLIGIBLE) sentence = `${head} (no part moved it by 0.05 points or more).`;
  else sentence = `${head}, spread over many small parts, none of 0.05 points or more.`;
  if (options.unnamedGroups) sentence += ' The groups are not named: their values are nearly unique per user.';
  if (options.behaviouralGroups) {
    sentence += ' The groups are defined by behaviour, so these parts show association with staying, not its cause.';
  }
  return sentence;
}

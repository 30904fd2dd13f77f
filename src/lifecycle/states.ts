/**
 * The lifecycle states: the one table the rules, the machine, the classifier, the Markov fit, the
 * sentences, the palette and the report read. The order is the order of every matrix and table:
 * active states first.
 *
 * Five base states, each with a role the rest of the code asks for instead of a name. Rules may split
 * an active state other than the arrival state by how many key events a user had in the period
 * (`splits`): the state is replaced, in place, by two sub-states that share its role and transitions.
 */
import type { StateInfo } from '../waist/manifest.js';

export type { StateInfo };
export type StateRole = StateInfo['role'];

interface BaseState {
  name: string;
  active: boolean;
  role: StateRole;
  label: string;
  colour: string;
  define(c: { act: string; grain: string; quiet: string }): string;
}

/**
 * The base states. Colours are tidemark's own: two blues, two warm tones and a neutral that differ in
 * lightness as well as hue, so they stay apart for the common colour-vision deficiencies and in
 * greyscale (tested in test/report/palette.test.ts).
 */
export const BASE_STATES: readonly BaseState[] = [
  { name: 'fresh', active: true, role: 'arrival', label: 'newcomers', colour: '#5AA9E6', define: (c) => `${c.act} for the first time this ${c.grain}` },
  { name: 'engaged', active: true, role: 'continuing', label: 'regulars', colour: '#1D4F91', define: (c) => `active this ${c.grain} and the ${c.grain} before` },
  { name: 'returned', active: true, role: 'return', label: 'returners', colour: '#E9B44C', define: (c) => `active this ${c.grain} after at least one quiet ${c.grain}` },
  { name: 'lapsing', active: false, role: 'lapse', label: 'lapsing users', colour: '#C4622D', define: (c) => `quiet for up to ${c.quiet} in a row` },
  { name: 'dormant', active: false, role: 'exit', label: 'dormant users', colour: '#8E8E8E', define: (c) => `quiet for more than ${c.quiet} in a row` },
];

/** The base state names, in order. */
export const STATES = BASE_STATES.map((s) => s.name) as readonly string[];
export type StateName = string;
/** Base states that mean "active in this period". */
export const ACTIVE_STATES: readonly string[] = BASE_STATES.filter((s) => s.active).map((s) => s.name);
/** The machine's state before a user's first active period (never output). */
export const UNSEEN = 'unseen';

/** The base state that has `role`. */
export function baseState(role: StateRole): string {
  return (BASE_STATES.find((s) => s.role === role) as BaseState).name;
}

/** Base states a rules file may split: active, and not the arrival state. */
export const SPLITTABLE: readonly string[] = BASE_STATES.filter((s) => s.active && s.role !== 'arrival').map((s) => s.name);

/** A split of an active state by key events in the period (the rules' `splits`). */
export interface StateSplit {
  state: string;
  /** Key events in the period from which a user is in the upper sub-state. */
  atLeast: number;
  /** [below, at or above]. */
  names: [string, string];
  /** Plural nouns for sentences, [below, at or above]. */
  labels?: [string, string];
}

export interface StateRules {
  lapseLimit: number;
  activity: { minEvents: number };
  splits?: readonly StateSplit[];
}

/** A colour lighter (f > 0) or darker (f < 0) than `hex`, mixing toward white or black. */
function shade(hex: string, f: number): string {
  const n = parseInt(hex.slice(1), 16);
  const ch = [(n >> 16) & 255, (n >> 8) & 255, n & 255].map((c) => Math.round(f > 0 ? c + (255 - c) * f : c * (1 + f)));
  return `#${ch.map((c) => c.toString(16).padStart(2, '0')).join('').toUpperCase()}`;
}

/**
 * The states of these rules, in matrix order, with role, plural label, colour and definition. A split
 * state becomes two sub-states in its place: the lower one a lighter shade of its colour, the upper one
 * a darker shade.
 * @example lifecycleStates({ lapseLimit: 2, activity: { minEvents: 1 } }).map((s) => s.name)
 *   // ['fresh', 'engaged', 'returned', 'lapsing', 'dormant']
 */
export function lifecycleStates(rules: StateRules, grainWord = 'period'): StateInfo[] {
  const quiet = rules.lapseLimit === 1 ? `one ${grainWord}` : `${rules.lapseLimit} ${grainWord}s`;
  const m = rules.activity.minEvents;
  const act = m === 1 ? 'active (at least one key event)' : `active (at least ${m} key events)`;
  const out: StateInfo[] = [];
  for (const b of BASE_STATES) {
    const definition = b.define({ act, grain: grainWord, quiet });
    const split = rules.splits?.find((s) => s.state === b.name);
    if (!split) {
      out.push({ name: b.name, active: b.active, role: b.role, label: b.label, colour: b.colour, definition });
      continue;
    }
    const k = split.atLeast;
    const [lo, hi] = split.labels ?? [`${split.names[0]} users`, `${split.names[1]} users`];
    out.push({ name: split.names[0], active: b.active, role: b.role, label: lo, colour: shade(b.colour, 0.45), definition: `${definition}, with fewer than ${k} key events in it` });
    out.push({ name: split.names[1], active: b.active, role: b.role, label: hi, colour: shade(b.colour, -0.25), definition: `${definition}, with ${k} or more key events in it` });
  }
  return out;
}

/** The names of {@link lifecycleStates}. */
export function stateNames(rules: StateRules): string[] {
  return lifecycleStates(rules).map((s) => s.name);
}

/** The output states a base state stands for (itself, or its two sub-states). */
export function statesOf(rules: StateRules, base: string): string[] {
  const split = rules.splits?.find((s) => s.state === base);
  return split ? [...split.names] : [base];
}

/** The distinct thresholds of the splits, ascending: an active period's level is 1 + how many it reaches. */
export function splitThresholds(rules: StateRules): number[] {
  return [...new Set((rules.splits ?? []).map((s) => s.atLeast))].sort((a, b) => a - b);
}

/**
 * The lifecycle states: the one table the classifier, the Markov fit, the sentences, the palette and
 * the report read. The order is the order of every matrix and table: active states first.
 */
import type { StateInfo } from '../waist/manifest.js';

export type { StateInfo };

export const STATES = ['fresh', 'engaged', 'returned', 'lapsing', 'dormant'] as const;
export type StateName = (typeof STATES)[number];
/** States that mean "active in this period". */
export const ACTIVE_STATES: readonly StateName[] = ['fresh', 'engaged', 'returned'];
/** The machine's state before a user's first active period (never output). */
export const UNSEEN = 'unseen';

/**
 * The base states with their role, plural label, colour and definition. Colours are tidemark's own:
 * two blues, two warm tones and a neutral that differ in lightness as well as hue, so they stay apart
 * for the common colour-vision deficiencies and in greyscale (tested in test/report/palette.test.ts).
 */
export function stateTable(rules: { lapseLimit: number; minEvents: number }, grainWord = 'period'): StateInfo[] {
  const quiet = rules.lapseLimit === 1 ? `one ${grainWord}` : `${rules.lapseLimit} ${grainWord}s`;
  const act = rules.minEvents === 1 ? 'active (at least one key event)' : `active (at least ${rules.minEvents} key events)`;
  return [
    { name: 'fresh', active: true, role: 'arrival', label: 'newcomers', colour: '#5AA9E6', definition: `${act} for the first time this ${grainWord}` },
    { name: 'engaged', active: true, role: 'continuing', label: 'regulars', colour: '#1D4F91', definition: `active this ${grainWord} and the ${grainWord} before` },
    { name: 'returned', active: true, role: 'return', label: 'returners', colour: '#E9B44C', definition: `active this ${grainWord} after at least one quiet ${grainWord}` },
    { name: 'lapsing', active: false, role: 'lapse', label: 'lapsing users', colour: '#C4622D', definition: `quiet for up to ${quiet} in a row` },
    { name: 'dormant', active: false, role: 'exit', label: 'dormant users', colour: '#8E8E8E', definition: `quiet for more than ${quiet} in a row` },
  ];
}

/**
 * The lifecycle states and their order. The order is the order of every matrix and table.
 */
export const STATES = ['fresh', 'engaged', 'returned', 'lapsing', 'dormant'] as const;
export type StateName = (typeof STATES)[number];
/** States that mean "active in this period". */
export const ACTIVE_STATES: readonly StateName[] = ['fresh', 'engaged', 'returned'];
/** The machine's state before a user's first active period (never output). */
export const UNSEEN = 'unseen';

/**
 * What "entered" means, checked against the state table of the README worked by hand (lapseLimit 2:
 * fresh, engaged and returned go to engaged when active, lapsing when quiet; lapsing to returned,
 * lapsing or dormant; dormant to returned or dormant; new users arrive in fresh), and against the
 * xstate machine itself walked over every activity sequence (independent of moves.ts and plan.ts).
 */
import { describe, expect, it } from 'vitest';
import { entryNames, entrySpec, type EntryRules } from '../../src/audience/entry.js';
import { TidemarkError } from '../../src/errors.js';
import { walkedMoves } from '../lifecycle/walk.js';

const RULES: EntryRules = { lapseLimit: 2, activity: { minEvents: 1 }, splits: [] };
const SPLIT: EntryRules = { ...RULES, splits: [{ state: 'engaged', atLeast: 3, names: ['steady', 'keen'] }] };

/** The error entrySpec throws, as [key, message, hint]. */
function refusal(f: () => unknown): [string | undefined, string, string | undefined] {
  try {
    f();
  } catch (e) {
    if (e instanceof TidemarkError) return [e.where.key, e.message, e.hint];
    throw e;
  }
  throw new Error('no refusal');
}

describe('entrySpec: who is listed (lapseLimit 2, the README table)', () => {
  it('an entry into a quiet state from a given state', () => {
    const s = entrySpec(RULES, 'dormant', 'lapsing');
    expect(s).toMatchObject({ entered: 'dormant', into: ['dormant'], from: { name: 'lapsing', states: ['lapsing'] }, newUsers: false });
    expect(s.definition).toBe('users who are dormant in the period and were lapsing the period before');
  });

  it('fresh is entered by new users only; returned never by new users', () => {
    expect(entrySpec(RULES, 'fresh')).toMatchObject({ newUsers: true, definition: 'new users, who are fresh in their first active period' });
    expect(entrySpec(RULES, 'returned')).toMatchObject({ newUsers: false, definition: 'users who are returned in the period and were not the period before' });
  });

  it('refuses an entry the rules rule out, with the reason and only possible entries as hints', () => {
    const [key, message, hint] = refusal(() => entrySpec(RULES, 'engaged', 'lapsing'));
    expect(key).toBe('fromState');
    expect(message).toBe('nobody enters engaged from lapsing: a lapsing user who is active the next period becomes returned');
    // README table: engaged is entered from fresh or returned; a lapsing user becomes returned, lapsing or dormant
    expect(hint).toBe('users enter engaged from fresh or returned; users who were lapsing enter returned or dormant');
  });

  it('refuses a --from-state for fresh (only new users enter it)', () => {
    const [key, message, hint] = refusal(() => entrySpec(RULES, 'fresh', 'dormant'));
    expect(key).toBe('fromState');
    expect(message).toMatch(/^nobody enters fresh from dormant: only new users enter fresh/);
    expect(hint).toBe('only new users enter fresh: drop --from-state; users who were dormant enter returned');
  });

  it('refuses staying in a state as an entry', () => {
    const [key, message] = refusal(() => entrySpec(RULES, 'lapsing', 'lapsing'));
    expect(key).toBe('fromState');
    expect(message).toMatch(/has not entered lapsing: they stayed/);
  });

  it('refuses an unknown state with "did you mean", and a state nobody is ever in (lapseLimit 0)', () => {
    expect(refusal(() => entrySpec(RULES, 'dormnt'))).toEqual(['entered', "'dormnt' is not a state of these rules", "did you mean 'dormant'?"]);
    const [key, message, hint] = refusal(() => entrySpec({ ...RULES, lapseLimit: 0 }, 'lapsing'));
    expect([key, message]).toEqual(['entered', 'no user is ever lapsing under these rules']);
    expect(hint).toBe('States users can enter: fresh, engaged, returned, dormant');
  });
});

describe('entrySpec with a split state (engaged → steady, keen)', () => {
  it('accepts the sub-states and the split state\'s name, which stands for both', () => {
    expect(entryNames(SPLIT)).toEqual(['fresh', 'steady', 'keen', 'returned', 'lapsing', 'dormant', 'engaged']);
    expect(entrySpec(SPLIT, 'engaged')).toMatchObject({ into: ['steady', 'keen'], newUsers: false });
    expect(entrySpec(SPLIT, 'engaged').definition).toBe('users who are steady or keen (engaged) in the period and were not the period before');
  });

  it('steady → keen enters keen; from engaged into keen means from steady', () => {
    expect(entrySpec(SPLIT, 'keen', 'engaged').from).toEqual({ name: 'engaged', states: ['steady'] });
    expect(refusal(() => entrySpec(SPLIT, 'engaged', 'keen'))[1]).toMatch(/has not entered engaged: they stayed/);
  });

  it('refuses lapsing → keen with the machine\'s reason', () => {
    expect(refusal(() => entrySpec(SPLIT, 'keen', 'lapsing'))[1]).toBe('nobody enters keen from lapsing: a lapsing user who is active the next period becomes returned');
  });
});

describe('entrySpec accepts exactly the entries the machine makes', () => {
  it.each([0, 1, 2, 3])('lapseLimit %i: every (entered, from) pair, accepted iff some path makes it', (L) => {
    const { moves, arrivals } = walkedMoves(L, L + 4);
    const rules = { ...RULES, lapseLimit: L };
    const names = entryNames(rules);
    for (const into of names) {
      const entered = [...moves].some((m) => m.endsWith(`->${into}`) && !m.startsWith(`${into}->`)) || arrivals.has(into);
      if (entered) expect(() => entrySpec(rules, into), into).not.toThrow();
      else expect(() => entrySpec(rules, into), into).toThrow(TidemarkError);
      for (const from of names) {
        const ok = from !== into && moves.has(`${from}->${into}`);
        if (ok) expect(() => entrySpec(rules, into, from), `${from}->${into}`).not.toThrow();
        else expect(() => entrySpec(rules, into, from), `${from}->${into}`).toThrow(TidemarkError);
      }
    }
  });
});

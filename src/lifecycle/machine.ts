/**
 * The lifecycle as an xstate v5 machine, generated from the rules.
 *
 * One event a period: `{ type: 'PERIOD', active, events }` (`events`: key events in the period). The
 * context counts consecutive inactive periods (`idle`). Guards read only the event and `idle`, so the
 * machine's answer depends on the tuple (state, active, events level, idle) alone — which is what
 * makes {@link ./plan.ts} able to tabulate it.
 *
 * | from                      | active   | inactive, idle + 1 ≤ lapseLimit | otherwise |
 * |---------------------------|----------|---------------------------------|-----------|
 * | unseen                    | fresh    | unseen                          | unseen    |
 * | fresh, engaged, returned  | engaged  | lapsing                         | dormant   |
 * | lapsing                   | returned | lapsing                         | dormant   |
 * | dormant                   | returned | dormant                         | dormant   |
 *
 * A split state (rules `splits`) is two sub-states with the transitions of the state they split; a
 * move into it goes to the upper sub-state when the period holds at least `atLeast` key events.
 */
import { assign, setup } from 'xstate';
import { baseState, BASE_STATES, type StateRules } from './states.js';

export interface LifecycleContext {
  idle: number;
}
export type LifecycleEvent = { type: 'PERIOD'; active: boolean; events: number };

export function lifecycleMachine(rules: Pick<StateRules, 'lapseLimit' | 'splits'>) {
  const lapseLimit = rules.lapseLimit;
  const [fresh, engaged, returned, lapsing, dormant] = (['arrival', 'continuing', 'return', 'lapse', 'exit'] as const).map(baseState);
  const splitOf = (base: string) => rules.splits?.find((s) => s.state === base);
  /** Transitions into `base` when active: into its sub-state by the period's key events when split. */
  const onActive = (base: string) => {
    const split = splitOf(base);
    if (!split) return [{ guard: 'isActive' as const, target: base, actions: 'resetIdle' as const }];
    return [
      { guard: { type: 'activeWithAtLeast' as const, params: { n: split.atLeast } }, target: split.names[1], actions: 'resetIdle' as const },
      { guard: 'isActive' as const, target: split.names[0], actions: 'resetIdle' as const },
    ];
  };
  const inactive = [
    { guard: 'withinLapse' as const, target: lapsing, actions: 'addIdle' as const },
    { target: dormant, actions: 'addIdle' as const },
  ];
  const handlers: Record<string, unknown[]> = {
    [fresh]: [...onActive(engaged), ...inactive],
    [engaged]: [...onActive(engaged), ...inactive],
    [returned]: [...onActive(engaged), ...inactive],
    [lapsing]: [...onActive(returned), ...inactive],
    [dormant]: [...onActive(returned), { target: dormant, actions: 'addIdle' as const }],
  };
  const states: Record<string, { on: { PERIOD: unknown[] } }> = { unseen: { on: { PERIOD: onActive(fresh) } } };
  for (const b of BASE_STATES) {
    const split = splitOf(b.name);
    for (const name of split ? split.names : [b.name]) states[name] = { on: { PERIOD: handlers[b.name] } };
  }
  return setup({
    types: { context: {} as LifecycleContext, events: {} as LifecycleEvent },
    guards: {
      isActive: ({ event }) => event.active,
      activeWithAtLeast: ({ event }, params: { n: number }) => event.active && event.events >= params.n,
      withinLapse: ({ context }) => context.idle + 1 <= lapseLimit,
    },
    actions: {
      resetIdle: assign({ idle: 0 }),
      addIdle: assign({ idle: ({ context }) => context.idle + 1 }),
    },
  }).createMachine({
    id: 'lifecycle',
    initial: 'unseen',
    context: { idle: 0 },
    // the transition lists are built from the table of states above, so their exact types are widened here
    states: states as never,
  });
}

export type LifecycleMachine = ReturnType<typeof lifecycleMachine>;

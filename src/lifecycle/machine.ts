/**
 * The lifecycle as an xstate v5 machine, generated from the rules.
 *
 * One event a period: `{ type: 'PERIOD', active }`. The context counts consecutive inactive
 * periods (`idle`). Guards read only the event and `idle`, so the machine's answer depends on the
 * tuple (state, active, idle) alone — which is what makes {@link ./plan.ts} able to tabulate it.
 *
 * | from                      | active   | inactive, idle + 1 ≤ lapseLimit | otherwise |
 * |---------------------------|----------|---------------------------------|-----------|
 * | unseen                    | fresh    | unseen                          | unseen    |
 * | fresh, engaged, returned  | engaged  | lapsing                         | dormant   |
 * | lapsing                   | returned | lapsing                         | dormant   |
 * | dormant                   | returned | dormant                         | dormant   |
 */
import { assign, setup } from 'xstate';
import type { Rules } from '../rules/schema.js';

export interface LifecycleContext {
  idle: number;
}
export type LifecycleEvent = { type: 'PERIOD'; active: boolean };

export function lifecycleMachine(rules: Pick<Rules, 'lapseLimit'>) {
  const lapseLimit = rules.lapseLimit;
  const onActive = (target: string) => ({ guard: 'isActive' as const, target, actions: 'resetIdle' as const });
  const inactive = [
    { guard: 'withinLapse' as const, target: 'lapsing', actions: 'addIdle' as const },
    { target: 'dormant', actions: 'addIdle' as const },
  ];
  return setup({
    types: { context: {} as LifecycleContext, events: {} as LifecycleEvent },
    guards: {
      isActive: ({ event }) => event.active,
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
    states: {
      unseen: { on: { PERIOD: [onActive('fresh')] } },
      fresh: { on: { PERIOD: [onActive('engaged'), ...inactive] } },
      engaged: { on: { PERIOD: [onActive('engaged'), ...inactive] } },
      returned: { on: { PERIOD: [onActive('engaged'), ...inactive] } },
      lapsing: { on: { PERIOD: [onActive('returned'), ...inactive] } },
      dormant: { on: { PERIOD: [onActive('returned'), { target: 'dormant', actions: 'addIdle' }] } },
    },
  });
}

export type LifecycleMachine = ReturnType<typeof lifecycleMachine>;

/**
 * The demo scenario (invented): the booking app of a fictional membership makerspace, "Tideworks
 * Makerspace", which opened its app on Monday 2026-05-04. Members book benches, reserve tools, check
 * in and enrol in classes. All data are simulated from a fixed seed; no real person or company.
 *
 * Planted truth (the tests check that the flows recover it):
 * - Members arrive each week (about 520, Poisson), with 1,500 at the opening week.
 * - A newcomer (first active week) is active the next week with probability 0.40; from the week
 *   retained into 2026-08-17 (week 15) on, a new onboarding lifts this to 0.55.
 * - A member active this week and past their first week (engaged or returned) stays active with
 *   probability 0.82; from that same week on, a booking-window change for long-standing members
 *   lowers it to 0.74.
 * - An inactive member comes back with probability 0.18 · 0.75^(k−1) after k inactive weeks.
 * - A promotion brings 3,500 extra newcomers in the week of 2026-09-07 (week 18), shifting the mix.
 */
import { mulberry32, type Rng } from '../numerics/random.js';

export const DEMO_START = Date.UTC(2026, 4, 4); // Monday 2026-05-04
export const DEMO_WEEKS = 30;
export const CHANGE_WEEK = 15;
export const PROMO_WEEK = 18;
export const PLANTED = {
  weeklyArrivals: 520,
  openingArrivals: 1500,
  promoExtra: 3500,
  newcomerBefore: 0.4,
  newcomerAfter: 0.55,
  veteranBefore: 0.82,
  veteranAfter: 0.74,
  comeBack: 0.18,
  comeBackDecay: 0.75,
} as const;

const WEEK = 7 * 86_400_000;
const EVENTS = ['booking_made', 'booking_made', 'booking_made', 'checked_in', 'checked_in', 'tool_reserved', 'class_enrolled'];
const PLANS = ['hobby', 'hobby', 'hobby', 'studio', 'studio', 'pro'];
const CHANNELS = ['open_day', 'referral', 'referral', 'newsletter', 'street_sign'];

function poisson(rng: Rng, mean: number): number {
  // Knuth's multiplication method for small means; normal approximation above 30
  if (mean > 30) return Math.max(0, Math.round(mean + Math.sqrt(mean) * Math.sqrt(-2 * Math.log(rng())) * Math.cos(2 * Math.PI * rng())));
  const l = Math.exp(-mean);
  let k = 0, p = 1;
  do {
    k++;
    p *= rng();
  } while (p > l);
  return k - 1;
}

export interface DemoEvent {
  user_id: string;
  timestamp: string;
  event: string;
  plan: string;
  channel: string;
}

/** Simulate the demo log; calls `sink` for each event in time order within each member. */
export function simulateMakerspace(seed = 20260504, sink: (e: DemoEvent) => void): { members: number; events: number } {
  const rng = mulberry32(seed);
  let members = 0, events = 0;
  for (let joinWeek = 0; joinWeek < DEMO_WEEKS; joinWeek++) {
    let arrivals = joinWeek === 0 ? PLANTED.openingArrivals : poisson(rng, PLANTED.weeklyArrivals);
    if (joinWeek === PROMO_WEEK) arrivals += PLANTED.promoExtra;
    for (let a = 0; a < arrivals; a++) {
      members++;
      const id = `m${String(members).padStart(6, '0')}`;
      const plan = PLANS[Math.floor(rng() * PLANS.length)];
      const channel = joinWeek === PROMO_WEEK && a >= arrivals - PLANTED.promoExtra ? 'promotion' : CHANNELS[Math.floor(rng() * CHANNELS.length)];
      let activeLast = true, idle = 0;
      for (let w = joinWeek; w < DEMO_WEEKS; w++) {
        let active: boolean;
        if (w === joinWeek) active = true;
        else if (activeLast) {
          const after = w >= CHANGE_WEEK;
          const p = w === joinWeek + 1 ? (after ? PLANTED.newcomerAfter : PLANTED.newcomerBefore) : after ? PLANTED.veteranAfter : PLANTED.veteranBefore;
          active = rng() < p;
        } else active = rng() < PLANTED.comeBack * PLANTED.comeBackDecay ** (idle - 1);
        if (active) {
          const n = 1 + poisson(rng, 1.5);
          const times: number[] = [];
          for (let e = 0; e < n; e++) times.push(DEMO_START + w * WEEK + Math.floor(rng() * 7) * 86_400_000 + (7 + Math.floor(rng() * 15)) * 3_600_000 + Math.floor(rng() * 3600) * 1000);
          times.sort((x, y) => x - y);
          for (const t of times) {
            sink({ user_id: id, timestamp: new Date(t).toISOString().replace('.000Z', 'Z'), event: EVENTS[Math.floor(rng() * EVENTS.length)], plan, channel });
            events++;
          }
          idle = 0;
        } else idle++;
        activeLast = active;
      }
    }
  }
  return { members, events };
}

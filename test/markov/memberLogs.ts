/**
 * A seeded member-level generator of weekly booking logs for a fictional makerspace (invented data,
 * for judging the projection bands on logs of several shapes). Written for the tests, independently of
 * src/markov: each member has a propensity (a normal on the logit scale, sd `spread`); a member is
 * active in a week with probability logistic(base + propensity + effect_t), base by the member's
 * situation (first week after joining, active last week, or k weeks idle); effect_t, the week's
 * activity effect, sums the shapes asked for:
 * - `shock`: a normal shock each week (sd), shared by every member;
 * - `decline`: a steady change per week (logit);
 * - `cycle`: { period, amp } a sine;
 * - `drift`: a random walk (sd a week);
 * - `step`: { week, by } a lasting shift of `by` from that week on (a structural break);
 * - `dip`: { from, to, by } a shift of `by` for weeks from … to − 1, then back;
 * - `turn`: { week, slope } the steady change per week becomes `slope` from that week on.
 * Arrivals a week are Poisson around `arrivals` × (1 + growth·t) × exp(arrivalShock·z_t), with
 * `spikes` (week → factor) of newcomers and an optional arrival decline (× (1 + arrivalTrend·t)).
 */
import { mulberry32 } from '../stats/prng.js';

export interface MemberLogSpec {
  weeks: number;
  arrivals: number;
  seed: number;
  /** Spread of the members' propensities (logit sd). */
  spread?: number;
  shock?: number;
  decline?: number;
  cycle?: { period: number; amp: number };
  drift?: number;
  step?: { week: number; by: number };
  dip?: { from: number; to: number; by: number };
  turn?: { week: number; slope: number };
  growth?: number;
  arrivalTrend?: number;
  arrivalShock?: number;
  spikes?: Record<number, number>;
  /** Base logits: newcomer's second week, active → active, first idle week (later idle weeks decay by `idleDecay`). */
  base?: { newcomer: number; active: number; idle: number; idleDecay: number };
}

const DAY = 86_400_000;
const START = Date.UTC(2025, 0, 6); // a Monday
const EVENTS = ['booking_made', 'checked_in', 'tool_reserved', 'class_enrolled'];

/** The log as CSV text (user_id,timestamp,event), one booking per active member-week. */
export function memberLogCsv(spec: MemberLogSpec): string {
  const rand = mulberry32(spec.seed);
  const gauss = () => {
    let u = rand();
    while (u === 0) u = rand();
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rand());
  };
  const poisson = (mean: number): number => {
    if (mean > 30) return Math.max(0, Math.round(mean + Math.sqrt(mean) * gauss()));
    const l = Math.exp(-mean);
    let k = 0, p = 1;
    do {
      k++;
      p *= rand();
    } while (p > l);
    return k - 1;
  };
  const base = spec.base ?? { newcomer: -0.4, active: 1.4, idle: -1.5, idleDecay: 0.35 };
  let walk = 0;
  const effect = Array.from({ length: spec.weeks }, (_, t) => {
    if (spec.drift) walk += spec.drift * gauss();
    return (spec.shock ? spec.shock * gauss() : 0) + (spec.decline ?? 0) * t + (spec.cycle ? spec.cycle.amp * Math.sin((2 * Math.PI * t) / spec.cycle.period) : 0) + walk + (spec.step && t >= spec.step.week ? spec.step.by : 0)
      + (spec.dip && t >= spec.dip.from && t < spec.dip.to ? spec.dip.by : 0) + (spec.turn && t > spec.turn.week ? (spec.turn.slope - (spec.decline ?? 0)) * (t - spec.turn.week) : 0);
  });
  const arrivals = Array.from({ length: spec.weeks }, (_, t) => {
    const mean = spec.arrivals * Math.max(0.05, 1 + (spec.growth ?? 0) * t) * Math.max(0.05, 1 + (spec.arrivalTrend ?? 0) * t) * Math.exp((spec.arrivalShock ?? 0) * gauss()) * (spec.spikes?.[t] ?? 1);
    return poisson(mean);
  });
  const rows = ['user_id,timestamp,event'];
  let id = 0;
  const logistic = (x: number) => 1 / (1 + Math.exp(-x));
  for (let join = 0; join < spec.weeks; join++) {
    for (let a = 0; a < arrivals[join]; a++) {
      id++;
      const own = (spec.spread ?? 0.8) * gauss();
      let idle = 0;
      for (let w = join; w < spec.weeks; w++) {
        let active: boolean;
        if (w === join) active = true;
        else {
          const b = idle === 0 ? (w === join + 1 ? base.newcomer : base.active) : base.idle - base.idleDecay * (idle - 1);
          active = rand() < logistic(b + own + effect[w]);
        }
        if (active) {
          idle = 0;
          const day = Math.floor(rand() * 7);
          rows.push(`u${id},${new Date(START + (w * 7 + day) * DAY + 3_600_000 * (8 + Math.floor(rand() * 12))).toISOString()},${EVENTS[Math.floor(rand() * EVENTS.length)]}`);
        } else idle++;
      }
    }
  }
  return rows.join('\n') + '\n';
}

/**
 * Simulated lifecycle chains whose true rates move by a known amount, written for the tests
 * independently of src/markov: per row, the rates of period t are base ⊙ exp(w_t + e_t) renormalised
 * over the row's moves, where w is a Gaussian random walk (standard deviation `walk` a period, per
 * cell) and e Gaussian noise that does not persist (`noise`); arrivals are normal around `arrivals`;
 * users move by binomial draws (exact for small counts, the normal approximation for large ones).
 * Optional: `common`, the standard deviation of a Gaussian shock c_tj drawn once a period for each
 * destination j and shared by every row (rates ⊙ exp(c_t)); `trend`, a steady change per period of the
 * log rate into each destination (rates ⊙ exp(trend·t)); `cycle`, a sine of `period` periods on the
 * log rate into each destination, amplitude `amp[j]` (rates ⊙ exp(amp·sin(2πt/period))).
 */
import type { WaistTables } from '../../src/flows/types.js';
import { mulberry32 } from '../stats/prng.js';
import { MAKERSPACE_P, STATES, weeks } from './helpers.js';

export interface ChainSpec {
  periods: number;
  walk: number;
  noise: number;
  arrivals: number;
  arrivalSd: number;
  start: number[];
  seed: number;
  base?: number[][];
  common?: number;
  trend?: number[];
  cycle?: { period: number; amp: number[] };
}

export function simulatedChain(spec: ChainSpec): WaistTables & { trueRates: number[][][] } {
  const rand = mulberry32(spec.seed);
  const gauss = () => {
    let u = rand();
    while (u === 0) u = rand();
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rand());
  };
  const binom = (n: number, p: number): number => {
    if (n <= 0 || p <= 0) return 0;
    if (p >= 1) return n;
    if (n <= 200) {
      let k = 0;
      for (let i = 0; i < n; i++) if (rand() < p) k++;
      return k;
    }
    return Math.min(n, Math.max(0, Math.round(n * p + Math.sqrt(n * p * (1 - p)) * gauss())));
  };
  const base = spec.base ?? MAKERSPACE_P;
  const S = base.length;
  const walk = base.map((row) => row.map(() => 0));
  const periods = weeks(spec.periods + 1);
  const stateCounts = [spec.start.slice()];
  const transitions: WaistTables['transitions'] = [];
  const trueRates: number[][][] = [];
  for (let t = 0; t < spec.periods; t++) {
    const shared = base.map((_, j) => (spec.common ? spec.common * gauss() : 0) + (spec.trend?.[j] ?? 0) * t + (spec.cycle ? spec.cycle.amp[j] * Math.sin((2 * Math.PI * t) / spec.cycle.period) : 0)); // no draw without a common shock: the other chains keep their numbers
    const rates = base.map((row, i) => {
      const w = row.map((p, j) => (p > 0 ? p * Math.exp((walk[i][j] += spec.walk * gauss()) + spec.noise * gauss() + shared[j]) : 0));
      const sum = w.reduce((a, b) => a + b, 0);
      return w.map((v) => v / sum);
    });
    trueRates.push(rates);
    const x = stateCounts[t];
    const counts = rates.map((row, i) => {
      let left = x[i], rest = 1;
      return row.map((p) => {
        const k = rest > 0 ? binom(left, Math.min(1, p / rest)) : 0;
        left -= k;
        rest -= p;
        return k;
      });
    });
    counts.forEach((row, i) => (row[S - 1] += x[i] - row.reduce((a, b) => a + b, 0))); // rounding remainder stays in the last state
    const fresh = Math.max(0, Math.round(spec.arrivals + spec.arrivalSd * gauss()));
    stateCounts.push(STATES.map((_, j) => counts.reduce((a, row) => a + row[j], 0) + (j === 0 ? fresh : 0)));
    transitions.push({ from: periods[t], to: periods[t + 1], counts, fresh });
  }
  return { states: [...STATES], activeStates: STATES.slice(0, 3), arrivalState: STATES[0], exitState: STATES[STATES.length - 1], periods, warmup: 0, stateCounts, transitions, tenureCells: [], cohorts: [], durations: [], trueRates };
}

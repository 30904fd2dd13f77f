/**
 * Shared shapes of the Markov module.
 *
 * Convention throughout: matrices are dense `number[][]`, **row-stochastic** (`matrix[i][j]` is the
 * probability of moving from `states[i]` to `states[j]` in one period; each row sums to 1). Vectors
 * are `number[]` in the order of `states`. Column-stochastic inputs are converted with
 * {@link columnToRow} from `validate.ts` before anything else sees them.
 */

/** A dense matrix, rows first. */
export type Matrix = number[][];

/** A dense vector in state order. */
export type Vector = number[];

/** A named row-stochastic transition matrix. */
export interface Chain {
  states: string[];
  /** matrix[i][j]: P(next state = states[j] | state = states[i]). */
  matrix: Matrix;
}

/** A planner's model: a chain plus optional start counts and constant inflow per period. */
export interface MarkovModel extends Chain {
  /** Users in each state at step 0; undefined when the document gave none. */
  start: Vector | undefined;
  /** New users arriving in each state every period (zeros when the document gave none). */
  inflow: Vector;
  /** The audience size when the document gave the start as shares (start is then shares × audience). */
  audience?: number;
}

/** A projection x(t+1) = x(t)·P + f; row t of each matrix is step t (row 0 is the start). */
export interface Projection {
  /** counts[t][s]: expected users in states[s] after t steps. */
  counts: Matrix;
  /** shares[t][s] = counts[t][s] / totals[t] (all zeros when the total is 0). */
  shares: Matrix;
  /** totals[t]: users in all states after t steps. */
  totals: Vector;
}

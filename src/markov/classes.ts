/**
 * Communicating classes of a chain: the strongly connected components of its support graph
 * (edge i → j when P[i][j] > 0), found with Tarjan's algorithm (Tarjan 1972, "Depth-first search and
 * linear graph algorithms", SIAM J. Computing 1(2)). A class is closed when no edge leaves it (its
 * states are recurrent); otherwise its states are transient. The period of a class is the gcd of the
 * lengths of its cycles, computed from breadth-first levels: gcd over internal edges u → v of
 * level(u) + 1 − level(v) (Grinstead & Snell, *Introduction to Probability*, ch. 11; Norris,
 * *Markov Chains*, §1.8). The search is recursive, meant for the small chains of this module (up to a
 * few hundred states).
 */
import type { Matrix } from './types.js';

export interface CommunicatingClass {
  /** State indices of the class, ascending. */
  states: number[];
  /** True when no transition leaves the class (recurrent states). */
  closed: boolean;
  /** gcd of cycle lengths; null for a single state without a self-loop (it never returns). */
  period: number | null;
}

/**
 * The communicating classes of `matrix`, ordered by their smallest state index. Entries > 0 are edges;
 * the matrix is not otherwise checked (callers validate first).
 *
 * @example communicatingClasses([[0, 1, 0], [1, 0, 0], [0.5, 0, 0.5]])
 *   // [{ states: [0, 1], closed: true, period: 2 }, { states: [2], closed: false, period: 1 }]
 */
export function communicatingClasses(matrix: Matrix): CommunicatingClass[] {
  const comps = tarjan(matrix);
  const compOf = new Array<number>(matrix.length);
  comps.forEach((c, k) => c.forEach((i) => (compOf[i] = k)));
  return comps
    .map((c, k) => ({
      states: [...c].sort((a, b) => a - b),
      closed: c.every((i) => matrix[i].every((p, j) => p <= 0 || compOf[j] === k)),
      period: periodOf(matrix, c, compOf, k),
    }))
    .sort((a, b) => a.states[0] - b.states[0]);
}

function tarjan(matrix: Matrix): number[][] {
  const n = matrix.length;
  const index = new Array<number>(n).fill(-1);
  const low = new Array<number>(n).fill(0);
  const onStack = new Array<boolean>(n).fill(false);
  const stack: number[] = [];
  const comps: number[][] = [];
  let next = 0;
  const visit = (v: number): void => {
    index[v] = low[v] = next++;
    stack.push(v);
    onStack[v] = true;
    for (let w = 0; w < n; w++) {
      if (!(matrix[v][w] > 0)) continue;
      if (index[w] < 0) {
        visit(w);
        low[v] = Math.min(low[v], low[w]);
      } else if (onStack[w]) low[v] = Math.min(low[v], index[w]);
    }
    if (low[v] === index[v]) {
      const comp: number[] = [];
      let w: number;
      do {
        w = stack.pop() as number;
        onStack[w] = false;
        comp.push(w);
      } while (w !== v);
      comps.push(comp);
    }
  };
  for (let v = 0; v < n; v++) if (index[v] < 0) visit(v);
  return comps;
}

function periodOf(matrix: Matrix, comp: number[], compOf: number[], k: number): number | null {
  const level = new Map<number, number>([[comp[0], 0]]);
  const queue = [comp[0]];
  let g = 0;
  let hasEdge = false;
  while (queue.length > 0) {
    const u = queue.shift() as number;
    matrix[u].forEach((p, v) => {
      if (!(p > 0) || compOf[v] !== k) return;
      hasEdge = true;
      const lv = level.get(v);
      if (lv === undefined) {
        level.set(v, (level.get(u) as number) + 1);
        queue.push(v);
      } else g = gcd(g, Math.abs((level.get(u) as number) + 1 - lv));
    });
  }
  return hasEdge ? g : null;
}

function gcd(a: number, b: number): number {
  return b === 0 ? a : gcd(b, a % b);
}

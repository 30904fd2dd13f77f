/**
 * Nelder–Mead simplex minimisation (Nelder & Mead 1965, "A simplex method for function
 * minimization", Computer Journal 7:308–313), in the form analysed by Lagarias, Reeds, Wright &
 * Wright (1998, "Convergence properties of the Nelder–Mead simplex method in low dimensions", SIAM
 * J. Optim. 9:112–147): reflection ρ = 1, expansion χ = 2, contraction γ = ½, shrink σ = ½, with
 * their tie-breaking (expansion only when the reflected point beats the best; inside and outside
 * contraction). Stops when the simplex's value spread ≤ fTolerance and its size (largest ∞-norm
 * distance from the best vertex) ≤ xTolerance, or after maxIterations. It then restarts from the
 * best point with a fresh simplex, up to `restarts` times, until a restart improves the value by no
 * more than fTolerance — the usual cure for a simplex collapsed away from the minimum.
 *
 * NaN values count as +Infinity, so an objective may reject points by returning Infinity.
 */
import { TidemarkError } from '../errors.js';

export interface NelderMeadOptions {
  /** Initial simplex step per coordinate; default 0.1·max(1, |x₀ᵢ|). */
  step?: number | readonly number[];
  /** Default 1e-10. */
  fTolerance?: number;
  /** Default 1e-10. */
  xTolerance?: number;
  /** Iterations per run; default 200 × dimension. */
  maxIterations?: number;
  /** Restarts from the best point; default 3. */
  restarts?: number;
}

export interface NelderMeadResult {
  x: number[];
  value: number;
  /** Iterations over all runs. */
  iterations: number;
  evaluations: number;
  /** The last run met both tolerances before maxIterations. */
  converged: boolean;
}

/**
 * Minimises f from x0.
 *
 * @throws {TidemarkError} INPUT_INVALID when x0 is empty or not finite, or f(x0) is not finite.
 * @example nelderMead(([x, y]) => (1 - x) ** 2 + 100 * (y - x * x) ** 2, [-1.2, 1]).x // ≈ [1, 1] (Rosenbrock 1960)
 */
export function nelderMead(f: (x: number[]) => number, x0: readonly number[], options: NelderMeadOptions = {}): NelderMeadResult {
  const n = x0.length;
  if (n === 0 || x0.some((v) => !Number.isFinite(v))) throw new TidemarkError('INPUT_INVALID', 'nelderMead: x0 must be a non-empty vector of finite numbers');
  const fTol = options.fTolerance ?? 1e-10;
  const xTol = options.xTolerance ?? 1e-10;
  const maxIter = options.maxIterations ?? 200 * n;
  const restarts = options.restarts ?? 3;
  let evaluations = 0;
  const F = (x: number[]): number => {
    evaluations++;
    const v = f(x);
    return Number.isNaN(v) ? Infinity : v;
  };
  const steps = x0.map((v, i) => {
    const s = options.step;
    return typeof s === 'number' ? s : s ? s[i] : 0.1 * Math.max(1, Math.abs(v));
  });

  let best = [...x0];
  let bestValue = F(best);
  if (!Number.isFinite(bestValue)) throw new TidemarkError('INPUT_INVALID', 'nelderMead: f(x0) is not finite');
  let iterations = 0;
  let converged = false;
  for (let run = 0; run <= restarts; run++) {
    const r = simplexRun(F, best, bestValue, steps, fTol, xTol, maxIter);
    iterations += r.iterations;
    converged = r.converged;
    const improvement = bestValue - r.value;
    if (r.value <= bestValue) {
      best = r.x;
      bestValue = r.value;
    }
    if (run > 0 && improvement <= fTol && converged) break;
  }
  return { x: best, value: bestValue, iterations, evaluations, converged };
}

function simplexRun(
  F: (x: number[]) => number, x0: number[], f0: number, steps: number[], fTol: number, xTol: number, maxIter: number,
): { x: number[]; value: number; iterations: number; converged: boolean } {
  const n = x0.length;
  let pts: number[][] = [x0];
  for (let i = 0; i < n; i++) {
    const p = [...x0];
    p[i] += steps[i];
    pts.push(p);
  }
  let vals = pts.map((p, i) => (i === 0 ? f0 : F(p)));
  const along = (a: number[], b: number[], t: number): number[] => a.map((v, i) => v + t * (b[i] - v));
  let it = 0;
  for (; it < maxIter; it++) {
    const order = vals.map((_, i) => i).sort((a, b) => vals[a] - vals[b]);
    pts = order.map((i) => pts[i]);
    vals = order.map((i) => vals[i]);
    const spreadF = vals[n] - vals[0];
    let spreadX = 0;
    for (let i = 1; i <= n; i++) for (let j = 0; j < n; j++) spreadX = Math.max(spreadX, Math.abs(pts[i][j] - pts[0][j]));
    if (spreadF <= fTol && spreadX <= xTol) return { x: pts[0], value: vals[0], iterations: it, converged: true };

    const centroid = new Array<number>(n).fill(0);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) centroid[j] += pts[i][j] / n;
    const worst = pts[n];
    const xr = along(centroid, worst, -1);
    const fr = F(xr);
    if (fr < vals[0]) {
      const xe = along(centroid, worst, -2);
      const fe = F(xe);
      if (fe < fr) [pts[n], vals[n]] = [xe, fe];
      else [pts[n], vals[n]] = [xr, fr];
      continue;
    }
    if (fr < vals[n - 1]) {
      [pts[n], vals[n]] = [xr, fr];
      continue;
    }
    if (fr < vals[n]) {
      const xc = along(centroid, worst, -0.5);
      const fc = F(xc);
      if (fc <= fr) {
        [pts[n], vals[n]] = [xc, fc];
        continue;
      }
    } else {
      const xcc = along(centroid, worst, 0.5);
      const fcc = F(xcc);
      if (fcc < vals[n]) {
        [pts[n], vals[n]] = [xcc, fcc];
        continue;
      }
    }
    for (let i = 1; i <= n; i++) {
      pts[i] = along(pts[0], pts[i], 0.5);
      vals[i] = F(pts[i]);
    }
  }
  const i = vals.indexOf(Math.min(...vals));
  return { x: pts[i], value: vals[i], iterations: it, converged: false };
}

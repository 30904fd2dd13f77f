/**
 * Restricted (diffuse) maximum likelihood for the local level model of a vector of shares: the
 * observation of period t is y_t = μ_t + ε_t, μ_t = μ_{t−1} + η_t, where ε_t has covariance
 * (φ + h_t)·Σ and η_t covariance δ·Σ, Σ = diag(m) − m·mᵀ the multinomial covariance of the pooled
 * shares m, h_t known (the binomial part, 1/n_t). Every covariance being a multiple of the same Σ, the
 * model splits into K − 1 independent scalar local level models with the same variances (K the cells
 * with m > 0), and the quadratic form of an innovation v (Σv = 0) under Σ's generalised inverse is
 * Pearson's Σ_j v_j²/m_j. The Kalman filter with a diffuse start on μ (Harvey 1989, *Forecasting,
 * Structural Time Series Models and the Kalman Filter*, §3.4) gives the log-likelihood
 *   ℓ(φ, δ) = −½ Σ_{t≥2} [(K − 1)·log F_t + Q_t/F_t],
 * F_t = P_t + φ + h_t the innovation variance, Q_t the Pearson form of the innovation; the diffuse
 * likelihood is the restricted (REML) likelihood of the unknown level (Tunnicliffe Wilson 1989, "On
 * the use of marginal likelihood in time series model estimation", JRSS B 51:15–27). It is maximised
 * over a log-spaced grid of (φ, δ) ∈ [0, max]², then finer grids around the best point. When the level
 * stands still the estimate of δ is exactly 0 with a good probability (Shephard & Harvey 1990, "On the
 * probability of estimating a deterministic component in the local level model", J. Time Series
 * Analysis 11:339–347).
 */

export interface LocalLevelObservation {
  /** Period index (increasing; a gap of g periods adds g·δ to the level's variance). */
  t: number;
  /** Observed shares over the K cells. */
  y: readonly number[];
  /** Known extra observation variance (a share of Σ), e.g. 1/n_t for binomial noise. */
  h: number;
}

export interface LocalLevelFit {
  /** φ: the variance of the noise that does not persist, as a multiple of Σ. */
  noise: number;
  /** δ: the variance the level adds each period, as a multiple of Σ. */
  drift: number;
  logLik: number;
}

/**
 * The diffuse log-likelihood ℓ(φ, δ) of `obs` with pooled shares `m` (cells with m = 0 are left out).
 * Fewer than two observations give 0.
 *
 * @example localLevelLogLik([{ t: 0, y: [0.5, 0.5], h: 0 }, { t: 1, y: [0.6, 0.4], h: 0 }], [0.5, 0.5], 0.01, 0.01) // −½(log 0.03 + 0.04/0.03) ≈ 1.087
 */
export function localLevelLogLik(obs: readonly LocalLevelObservation[], m: readonly number[], noise: number, drift: number): number {
  const weights = m.map((v) => (v > 0 ? 1 / v : 0));
  return filter(obs, weights, m.filter((v) => v > 0).length - 1, noise, drift).logLik;
}

/**
 * The filtered level at the last observation and its variance (a multiple of Σ), and the innovations
 * y_t − a_t of every observation after the first, for given φ and δ.
 *
 * @example filterLocalLevel([{ t: 0, y: [0.5, 0.5], h: 0 }, { t: 1, y: [0.6, 0.4], h: 0 }], [0.5, 0.5], 0, 0.01) // { level: [0.6, 0.4], variance: 0, innovations: [{ t: 1, v: [0.1, -0.1] }] }
 */
export function filterLocalLevel(obs: readonly LocalLevelObservation[], m: readonly number[], noise: number, drift: number): { level: number[]; variance: number; innovations: { t: number; v: number[] }[] } {
  const innovations: { t: number; v: number[] }[] = [];
  const f = filter(obs, m.map((v) => (v > 0 ? 1 / v : 0)), Math.max(1, m.filter((v) => v > 0).length - 1), noise, drift, innovations);
  return { level: f.level, variance: f.variance, innovations };
}

/** The Kalman filter of the local level model: the log-likelihood, and the level at the last period with its variance; the innovations y_t − a_t are pushed to `out` when given. */
function filter(obs: readonly LocalLevelObservation[], weights: readonly number[], dof: number, noise: number, drift: number, out?: { t: number; v: number[] }[]): { logLik: number; level: number[]; variance: number } {
  if (obs.length === 0) return { logLik: 0, level: [], variance: 0 };
  const a = obs[0].y.slice();
  let P = noise + obs[0].h;
  let ll = 0;
  if (dof < 1) return { logLik: 0, level: a, variance: P };
  for (let k = 1; k < obs.length; k++) {
    const o = obs[k];
    const prior = P + (o.t - obs[k - 1].t) * drift;
    const F = prior + noise + o.h;
    if (!(F > 0)) return { logLik: -Infinity, level: a, variance: P };
    let Q = 0;
    for (let j = 0; j < a.length; j++) if (weights[j] > 0) Q += (o.y[j] - a[j]) ** 2 * weights[j];
    ll -= 0.5 * (dof * Math.log(F) + Q / F);
    if (out) out.push({ t: o.t, v: a.map((aj, j) => o.y[j] - aj) });
    const gain = prior / F;
    for (let j = 0; j < a.length; j++) a[j] += gain * (o.y[j] - a[j]);
    P = prior * (1 - gain);
  }
  return { logLik: ll, level: a, variance: P };
}

/**
 * φ and δ maximising {@link localLevelLogLik} over [0, max]² (a grid of 0 and 32 log-spaced values from
 * 1e-6·max to max each, then rounds of a 9 × 9 grid around the best point, each finer).
 *
 * @example fitLocalLevel(obs, m, 0.5) // { noise: 0.003, drift: 0, logLik: … } when the level stands still
 */
export function fitLocalLevel(obs: readonly LocalLevelObservation[], m: readonly number[], max: number): LocalLevelFit {
  const weights = m.map((v) => (v > 0 ? 1 / v : 0));
  return maximise(obs, weights, m.filter((v) => v > 0).length - 1, max);
}

/**
 * The same fit for one series of numbers (y_t one value, weight 1, one degree of freedom), with the
 * filtered level at the last period and its variance.
 *
 * @example fitScalarLocalLevel([{ t: 0, y: [0], h: 0.01 }, { t: 1, y: [0.1], h: 0.01 }, …], 1) // { noise, drift, level, variance, logLik }
 */
export function fitScalarLocalLevel(obs: readonly LocalLevelObservation[], max: number): LocalLevelFit & { level: number; variance: number } {
  const fit = maximise(obs, [1], 1, max);
  const f = filter(obs, [1], 1, fit.noise, fit.drift);
  return { ...fit, level: f.level[0] ?? 0, variance: f.variance };
}

function maximise(obs: readonly LocalLevelObservation[], weights: readonly number[], dof: number, max: number): LocalLevelFit {
  const ll = (noise: number, drift: number) => filter(obs, weights, dof, noise, drift).logLik;
  const grid = [0, ...Array.from({ length: 32 }, (_, i) => max * 10 ** (-6 + (6 * i) / 31))];
  let best = { noise: 0, drift: 0, logLik: ll(0, 0), i: 0, k: 0 };
  for (let i = 0; i < grid.length; i++) {
    for (let k = 0; k < grid.length; k++) {
      const v = ll(grid[i], grid[k]);
      if (v > best.logLik) best = { noise: grid[i], drift: grid[k], logLik: v, i, k };
    }
  }
  // refine: three rounds of a 9 × 9 grid around the best point, each a quarter of the last one's span
  let [n0, n1] = [grid[Math.max(0, best.i - 1)], grid[Math.min(grid.length - 1, best.i + 1)]];
  let [d0, d1] = [grid[Math.max(0, best.k - 1)], grid[Math.min(grid.length - 1, best.k + 1)]];
  for (let round = 0; round < 3; round++) {
    const start = { ...best };
    for (let a = 0; a <= 8; a++) {
      for (let b = 0; b <= 8; b++) {
        const noise = n0 + ((n1 - n0) * a) / 8, drift = d0 + ((d1 - d0) * b) / 8;
        const v = ll(noise, drift);
        if (v > best.logLik) best = { ...best, noise, drift, logLik: v };
      }
    }
    const wn = (n1 - n0) / 8, wd = (d1 - d0) / 8;
    [n0, n1] = [Math.max(0, best.noise - wn), Math.min(max, best.noise + wn)];
    [d0, d1] = [Math.max(0, best.drift - wd), Math.min(max, best.drift + wd)];
    if (start.logLik === best.logLik && round > 0) break;
  }
  return { noise: best.noise, drift: best.drift, logLik: best.logLik };
}

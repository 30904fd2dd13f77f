/**
 * Public API of the Markov module: pure functions over small row-stochastic matrices.
 * Everything here is stable unless marked otherwise; internal helpers (guards, names) are not exported.
 *
 * Not-enough-data policy of the layer: a fit never throws for sparse data, it keeps a state with no
 * observed transitions out absorbing and lists it in `emptyRows`; selecting a range with no transitions
 * and a backtest without a scorable origin throw `NOT_ENOUGH_DATA` / `RANGE_INVALID`. Long-run questions
 * the chain cannot answer with one number (reducible, periodic, infinite passage times, growing counts)
 * return a structured explanation instead.
 */

// Shapes
export type { Chain, MarkovModel, Matrix, Projection, Vector } from './types.js';

// Input: documents, selections, fitting
export { validateModel, columnToRow } from './validate.js';
export { parseSelection, selectTransitions, type TransitionSelection } from '../flows/select.js';
export { fitChain, normaliseCounts, type FitOptions, type FittedChain } from './fit.js';

// Projection and long run
export { project } from './project.js';
export { communicatingClasses, type CommunicatingClass } from './classes.js';
export { stationary, classDistribution, type Stationary } from './stationary.js';
export { steadyCounts, type SteadyCounts } from './steady.js';
export { firstPassage, type FirstPassage } from './passage.js';
export { meanFirstPassage, type MeanFirstPassage } from './ergodic.js';

// What-if
export { parseScenario, type Edit } from './scenario.js';
export { reweightRow } from './reweight.js';
export { applyScenario, checkEdits, whatIf, type AppliedScenario, type MoveRules, type ScenarioModel, type WhatIf } from './whatif.js';

// Uncertainty and backtest
// (the generic samplers and percentiles live in src/numerics; re-exported here for the library API)
export { mulberry32, normal, type Rng } from '../numerics/random.js';
export { gamma } from '../numerics/gamma.js';
export { sampleDirichlet } from '../numerics/dirichlet.js';
export { quantileSorted } from '../numerics/quantile.js';
export { sampleTransitionMatrix, dirichletParameters, type DirichletOptions } from './dirichlet.js';
export { projectionBands, type BandOptions, type Bands } from './bands.js';
export { commonShare, rateVariation, type RowVariation } from './variation.js';
export { estimateInflow, inflowAt, INFLOW_METHODS, type InflowEstimate, type InflowMethod } from './inflow.js';
export { simulatePaths, type PathModel, type PathEdits, type Simulation } from './simulate.js';
export { forecastWindow, type Forecast } from './forecast.js';
export { backtest, intervalScore, type BacktestOptions, type BacktestRow, type Backtest } from './backtest.js';

// Scenarios side by side, segments
export { parseNamedScenario, type NamedScenario } from './scenario.js';
export { type ScenarioOutput } from './scenarios.js';
export { projectSegments, type SegmentsOutput } from './segments.js';

// The whole projection job
export { computeProjection, type ProjectOutput, type ProjectionOptions, type ProjectionStep } from './run.js';

// Linear algebra (the shared dense helpers of src/numerics, re-exported for the library API)
export { identity, transpose, vecMat, matVec, matMul, solve, solveMany, inverse } from '../numerics/linalg.js';

// Method: the public API of the planner (docs/planning.md), re-exported from one place.
// Convention: pure TypeScript, no I/O; the MILP solver is injected by the caller.
export * from './types';
export { planDesign, EXACT_MAX_OPERATIONS, gapPercent } from './plan';
export { sweepDesign } from './sweep';
export { buildProblem, setsFromAssignment, designWithSets, designDocument, operationsPerKind, type PlanProblem } from './problem';
export { evaluateDesign, muxInputs, compareMetrics, type Evaluation } from './evaluate';
export { planBounds, planFactorLowerBound, registerLowerBound, type PlanBounds } from './bounds';
export { heuristicPlan, HEURISTIC_METHOD } from './heuristic';
export { exactPlan } from './exact';

// The planning engine's API as the jobs use it (shared/planning/, docs/planning.md).
export type { MilpSolution, MilpSolver, PlanObjective, PlanMetrics, PlanOptions, PlanProgress, PlanResult, SweepOptions, SweepRow } from '../../shared/planning/types';
import type { Design } from '../../shared/types';
import type { PlanOptions, PlanResult, SweepOptions, SweepRow } from '../../shared/planning/types';

export type PlanDesign = (design: Design, options: PlanOptions) => Promise<PlanResult>;
export type SweepDesign = (design: Design, options: SweepOptions) => Promise<SweepRow[]>;

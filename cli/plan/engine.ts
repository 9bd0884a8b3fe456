// Where `pleat plan` and `pleat sweep` get the planner from: the engine's planDesign and
// sweepDesign (shared/planning/), loaded on first use so other commands never pay for it.
import type { PlanDesign, SweepDesign } from './api';

export interface Planner {
  planDesign: PlanDesign;
  sweepDesign: SweepDesign;
}

export async function loadPlanner(): Promise<Planner> {
  const planning = await import('../../shared/planning/index');
  return { planDesign: planning.planDesign, sweepDesign: planning.sweepDesign };
}

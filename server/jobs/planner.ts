// Where the worker finds the planning engine (shared/planning/). Imported by the worker only
// (server/main.ts loads it for the `worker` sub-command), so the API process never loads it.
import { planDesign, sweepDesign } from '../../shared/planning/index';
import type { Planner } from './run';

export async function loadPlanner(): Promise<Planner> {
  return { planDesign, sweepDesign };
}

// Method: mixed-integer model of rate-optimal static scheduling (Parhi and Messerschmitt 1989) and modulo
// scheduling, with binding, retiming and lifetime-analysis registers; written in CPLEX LP format, solved by an injected solver.
// Convention: placeholder until the model lands; it reports that it did not run.
import type { PlanProblem } from './problem';
import type { MilpSolver, PlanMetrics, PlanObjective } from './types';

export interface ExactOptions {
  objective: PlanObjective;
  solver: MilpSolver;
  timeLimitSeconds: number;
  incumbent: PlanMetrics | null;
  incumbentSets: Record<string, (string | null)[]> | null;
  now: () => number;
  deadline: number;
  signal?: { aborted: boolean };
}

export interface ExactResult {
  sets: Record<string, (string | null)[]> | null;
  metrics: PlanMetrics | null;
  /** Proven lower bound on the primary objective. */
  bound: number | null;
  provenOptimal: boolean;
  infeasible: boolean;
  method: string;
  notes: string[];
}

export async function exactPlan(_p: PlanProblem, _o: ExactOptions): Promise<ExactResult> {
  return { sets: null, metrics: null, bound: null, provenOptimal: false, infeasible: false, method: 'exact: not available', notes: ['the exact model is not built yet'] };
}

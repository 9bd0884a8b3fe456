// The tests take the one HiGHS adapter (solvers/highs.ts), as `pleat plan` and the job workers do;
// the engine stays pure and gets the solver injected.
import { highsSolver as adapter } from '../../solvers/highs';
import type { MilpSolver } from '../../shared/planning/types';

export async function highsSolver(): Promise<MilpSolver> {
  return adapter();
}

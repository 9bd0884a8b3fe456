// The real `highs` npm package (HiGHS compiled to WebAssembly) behind the planner's MilpSolver
// interface, for the tests: the engine stays pure and gets the solver injected.
import loadHighs from 'highs';
import type { MilpSolution, MilpSolver } from '../../shared/planning/types';

let loaded: Promise<Awaited<ReturnType<typeof loadHighs>>> | null = null;

export async function highsSolver(): Promise<MilpSolver> {
  loaded ??= loadHighs();
  const highs = await loaded;
  return {
    name: 'HiGHS',
    async solve(lp: string, options: { timeLimitSeconds: number }): Promise<MilpSolution> {
      let r;
      try {
        r = highs.solve(lp, { output_flag: false, time_limit: options.timeLimitSeconds, mip_rel_gap: 0, parallel: 'off', threads: 1 } as never);
      } catch (err) {
        return { status: 'error', objective: null, bound: null, values: {}, message: err instanceof Error ? err.message : String(err) };
      }
      const values: Record<string, number> = {};
      const cols = (r.Columns ?? {}) as Record<string, { Primal?: number }>;
      for (const [k, c] of Object.entries(cols)) if (typeof c.Primal === 'number') values[k] = c.Primal;
      switch (r.Status) {
        case 'Optimal':
          return { status: 'optimal', objective: r.ObjectiveValue, bound: r.ObjectiveValue, values };
        case 'Infeasible':
          return { status: 'infeasible', objective: null, bound: null, values: {} };
        case 'Time limit reached':
          return { status: 'timeout', objective: Object.keys(values).length ? r.ObjectiveValue : null, bound: null, values };
        default:
          return { status: 'error', objective: null, bound: null, values: {}, message: r.Status };
      }
    },
  };
}

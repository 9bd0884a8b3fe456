// A MilpSolver over HiGHS (the `highs` npm package: HiGHS compiled to WebAssembly, no native
// build). It lives outside shared/ because shared/ takes no npm packages but yaml, js-yaml and
// ajv, and outside cli/ and server/ because both use it and neither may import the other
// (DEVELOPERS.md, Layout). The model arrives as CPLEX-LP text; HiGHS's statuses and its MIP dual
// bound are mapped onto the engine's MilpSolution.
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import type { Highs, Model } from 'highs';
import type { MilpSolution, MilpSolver } from '../shared/planning/types';

let runtime: Promise<Highs> | null = null;

/** One WebAssembly instance per process: compiling the module costs more than a small solve. */
function loadHighs(): Promise<Highs> {
  runtime ??= (async () => {
    const { default: loader } = await import('highs');
    // Bundled code cannot find highs.wasm beside itself: hand the loader the bytes.
    const wasmBinary = readFileSync(createRequire(import.meta.url).resolve('highs/runtime'));
    return loader({ wasmBinary });
  })().catch((err) => {
    runtime = null;
    throw err;
  });
  return runtime;
}

export interface HighsSolverOptions {
  /** Relative MIP gap at which HiGHS may stop and call the incumbent optimal; 0 proves optimality. */
  relativeGap?: number;
  /**
   * Read by HiGHS's MIP interrupt callback while it solves. A solve is synchronous, so only a
   * flag that changes by itself (a getter over the clock) can stop one midway.
   */
  signal?: { readonly aborted: boolean };
}

const failed = (message: string): MilpSolution => ({ status: 'error', objective: null, bound: null, values: {}, message });

export function highsSolver(solverOptions: HighsSolverOptions = {}): MilpSolver {
  return {
    async solve(lp, options) {
      let highs: Highs;
      try {
        highs = await loadHighs();
      } catch (e) {
        return failed(`the HiGHS solver could not be loaded: ${(e as Error).message}`);
      }
      try {
        return highs.withModel({ format: 'lp', data: lp }, (model): MilpSolution => {
          model.options.set({ output_flag: false, time_limit: Math.max(0.01, options.timeLimitSeconds), mip_rel_gap: solverOptions.relativeGap ?? 0 });
          const signal = solverOptions.signal;
          const callbacks = signal
            ? { [highs.constants.callbackType.mipInterrupt]: (event: { interrupt: () => void }) => { if (signal.aborted) event.interrupt(); return undefined; } }
            : undefined;
          const run = model.run(callbacks as Parameters<typeof model.run>[0]);
          const s = highs.constants.modelStatus;
          const status = run.modelStatus as number;
          const hasPrimal = Number(model.info.get('primal_solution_status')) === highs.constants.solutionStatus.feasible;
          const values = hasPrimal ? columnValues(model) : {};
          const objective = hasPrimal ? model.getObjectiveValue() : null;
          const dual = finiteInfo(model, 'mip_dual_bound');
          if (status === s.optimal) return { status: 'optimal', objective, bound: dual ?? objective, values };
          if (status === s.empty) return { status: 'optimal', objective: model.getObjectiveOffset(), bound: model.getObjectiveOffset(), values: {} };
          // The engine's variables are bounded, so "infeasible or unbounded" means infeasible.
          if (status === s.infeasible || status === s.unboundedOrInfeasible) return { status: 'infeasible', objective: null, bound: null, values: {} };
          if (status === s.unbounded) return failed('HiGHS: the model is unbounded');
          const limited = [s.timeLimit, s.iterationLimit, s.interrupted, s.solutionLimit, s.objectiveBound, s.objectiveTarget] as number[];
          if (limited.includes(status)) {
            const why = status === s.timeLimit ? 'time limit reached' : status === s.interrupted ? 'interrupted' : 'limit reached';
            return hasPrimal
              ? { status: 'feasible', objective, bound: dual, values, message: `HiGHS: ${why}` }
              : { status: 'timeout', objective: null, bound: dual, values: {}, message: `HiGHS: ${why} before a feasible solution was found` };
          }
          return failed(`HiGHS ended with model status ${status}`);
        });
      } catch (e) {
        return failed(`HiGHS: ${(e as Error).message.split('\n')[0]}`);
      }
    },
  };
}

function columnValues(model: Model): Record<string, number> {
  const { colValue } = model.getSolution();
  const values: Record<string, number> = {};
  for (let i = 0; i < colValue.length; i++) values[model.getColName(i)] = colValue[i]!;
  return values;
}

function finiteInfo(model: Model, name: string): number | null {
  try {
    const v = Number(model.info.get(name as never));
    return Number.isFinite(v) ? v : null;
  } catch {
    return null;
  }
}

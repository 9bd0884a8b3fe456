// A MilpSolver over HiGHS (the `highs` npm package: the HiGHS solver compiled to WebAssembly).
// Loaded on first use only, so commands other than `plan` and `sweep` never pay for the 3.5 MB
// module. The model arrives as CPLEX-LP text; statuses and the MIP dual bound are mapped to the
// engine's MilpSolution (docs/cli.md, "Planning"; the model itself: docs/planning.md).
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import type { Highs, Model } from 'highs';
import type { MilpSolution, MilpSolveOptions, MilpSolver } from '../shared/planning/types';

let runtime: Promise<Highs> | null = null;

/** One WebAssembly instance per process: compiling the module costs far more than a solve of a small model. */
function loadHighs(): Promise<Highs> {
  if (!runtime) {
    runtime = (async () => {
      const { default: loader } = await import('highs');
      // The CLI is bundled, so the loader cannot find highs.wasm beside itself: point it at the
      // package's copy and hand it the bytes.
      const require = createRequire(import.meta.url);
      const wasmPath = require.resolve('highs/runtime');
      return loader({ locateFile: () => wasmPath, wasmBinary: readFileSync(wasmPath) });
    })();
    runtime.catch(() => {
      runtime = null;
    });
  }
  return runtime;
}

export interface HighsSolverOptions {
  /** Relative MIP gap at which HiGHS may stop and call the incumbent optimal; 0 proves optimality. */
  relativeGap?: number;
  /** Cancellation polled by HiGHS's MIP interrupt callback. */
  signal?: { aborted: boolean };
  /**
   * Largest model text handed to HiGHS. The module copies the text into WebAssembly memory
   * through its in-memory file system, which takes several times the text's size; beyond this
   * the solve is refused (status 'error') so the planner falls back instead of the process
   * running out of memory. Default 32 million characters.
   */
  maxModelChars?: number;
}

export const DEFAULT_MAX_MODEL_CHARS = 32_000_000;

export function highsSolver(solverOptions: HighsSolverOptions = {}): MilpSolver {
  return {
    name: 'HiGHS',
    async solve(lp: string, options: MilpSolveOptions): Promise<MilpSolution> {
      // The limit covers the whole call: loading the module (the first time) and reading the model
      // count against it, so HiGHS gets what is left.
      const started = Date.now();
      const max = solverOptions.maxModelChars ?? DEFAULT_MAX_MODEL_CHARS;
      if (lp.length > max) {
        return failed(`the model is ${(lp.length / 1e6).toFixed(1)} million characters of LP text, more than the ${(max / 1e6).toFixed(1)} million the HiGHS adaptor takes`);
      }
      let highs: Highs;
      try {
        highs = await loadHighs();
      } catch (e) {
        return failed(`the HiGHS solver could not be loaded: ${(e as Error).message}`);
      }
      try {
        return highs.withModel({ format: 'lp', data: lp }, (model): MilpSolution => {
          const left = options.timeLimitSeconds - (Date.now() - started) / 1000;
          if (left <= 0) return { status: 'timeout', objective: null, bound: null, values: {}, message: 'HiGHS: no time left after loading and reading the model' };
          model.options.set({
            output_flag: false,
            time_limit: Math.max(0.01, left),
            mip_rel_gap: solverOptions.relativeGap ?? 0,
          });
          if (options.start) setStart(model, options.start);
          const signal = solverOptions.signal;
          const callbacks = signal
            ? {
                [highs.constants.callbackType.mipInterrupt]: (event: { interrupt: () => void }) => {
                  if (signal.aborted) event.interrupt();
                  return undefined;
                },
              }
            : undefined;
          const run = model.run(callbacks as Parameters<typeof model.run>[0]);
          const s = highs.constants.modelStatus;
          const status = run.modelStatus as number;
          const hasPrimal = Number(model.info.get('primal_solution_status')) === highs.constants.solutionStatus.feasible;
          const isMip = isMipModel(model);
          const values = hasPrimal ? columnValues(model) : {};
          const objective = hasPrimal ? model.getObjectiveValue() : null;
          const dual = isMip ? finiteInfo(model, 'mip_dual_bound') : null;

          if (status === s.optimal) {
            const reducedCosts = options.duals && !isMip ? columnDuals(model, highs.constants.solutionStatus.feasible) : undefined;
            return { status: 'optimal', objective, bound: dual ?? objective, values, ...(reducedCosts ? { reducedCosts } : {}) };
          }
          if (status === s.empty) {
            // No columns or rows: the optimum is the objective's constant.
            return { status: 'optimal', objective: model.getObjectiveOffset(), bound: model.getObjectiveOffset(), values: {} };
          }
          if (status === s.infeasible) return { status: 'infeasible', objective: null, bound: null, values: {} };
          if (status === s.unboundedOrInfeasible) {
            // The engine's models have bounded variables, so presolve saying "infeasible or
            // unbounded" means infeasible; the message keeps the distinction for anyone reading.
            return { status: 'infeasible', objective: null, bound: null, values: {}, message: 'HiGHS: infeasible or unbounded' };
          }
          if (status === s.unbounded) return failed('HiGHS: the model is unbounded');
          const limited = [s.timeLimit, s.iterationLimit, s.interrupted, s.solutionLimit, s.objectiveBound, s.objectiveTarget] as number[];
          if (limited.includes(status)) {
            const why = status === s.timeLimit ? 'time limit reached' : status === s.interrupted ? 'interrupted' : 'limit reached';
            if (hasPrimal) return { status: 'feasible', objective, bound: dual, values, message: `HiGHS: ${why}` };
            return { status: 'timeout', objective: null, bound: dual, values: {}, message: `HiGHS: ${why} before a feasible solution was found` };
          }
          return failed(`HiGHS ended with model status ${status}`);
        });
      } catch (e) {
        // A model HiGHS cannot parse, an option it refuses: an error value, never a throw.
        return failed(`HiGHS: ${(e as Error).message.split('\n')[0]}`);
      }
    },
  };
}

/** A (partial) MIP start by column name; names the model does not have are left out, and HiGHS completes or drops the start. */
function setStart(model: Model, start: Record<string, number>): void {
  const indices: number[] = [];
  const values: number[] = [];
  for (const [name, v] of Object.entries(start)) {
    let i = -1;
    try {
      i = model.getColByName(name);
    } catch {
      i = -1;
    }
    if (i >= 0) {
      indices.push(i);
      values.push(v);
    }
  }
  if (indices.length === 0) return;
  try {
    model.setSolution({ indices, values });
  } catch {
    // a start HiGHS refuses only costs the time it would have saved
  }
}

function failed(message: string): MilpSolution {
  return { status: 'error', objective: null, bound: null, values: {}, message };
}

function columnValues(model: Model): Record<string, number> {
  const { colValue } = model.getSolution();
  const values: Record<string, number> = {};
  for (let i = 0; i < colValue.length; i++) values[model.getColName(i)] = colValue[i];
  return values;
}

function columnDuals(model: Model, feasible: number): Record<string, number> | undefined {
  if (Number(model.info.get('dual_solution_status')) !== feasible) return undefined;
  const { colDual } = model.getSolution();
  const duals: Record<string, number> = {};
  for (let i = 0; i < colDual.length; i++) duals[model.getColName(i)] = colDual[i];
  return duals;
}

function isMipModel(model: Model): boolean {
  const n = model.getDimensions().numCols;
  for (let i = 0; i < n; i++) {
    const t = model.getColIntegrality(i) as unknown as number;
    if (t !== 0) return true;
  }
  return false;
}

function finiteInfo(model: Model, name: string): number | null {
  try {
    const v = Number(model.info.get(name));
    return Number.isFinite(v) ? v : null;
  } catch {
    return null;
  }
}

// Method: scores a complete plan by the engine itself: analyze (shared/analysis/analyze.ts) for the retiming
// `check` chooses and the lifetime-analysis minimum, the control tables (shared/hardware/control.ts) for mux inputs.
// Convention: muxInputs = sum over unit operand ports of the distinct sources of that port's table.
import type { Analysis, Design } from '../types';
import { analyzeDatapath, type FoldedDatapath } from '../analysis/analyze';
import { countMuxInputs } from '../hardware/control';
import type { PlanMetrics, PlanObjective } from './types';

export interface Evaluation {
  feasible: boolean;
  metrics: PlanMetrics | null;
  analysis: Analysis;
  /** Why it is infeasible, when it is. */
  reason?: string;
}

/**
 * Multiplexer inputs of a feasible analysis, counted as the control tables count them
 * (shared/hardware/control.ts, countMuxInputs: the tables' own steps without building them, and
 * without the cell limit up to which `pleat simulate` and `pleat rtl` build the tables).
 */
export function muxInputs(design: Design, analysis: Analysis, datapath: FoldedDatapath | null = null): number {
  return countMuxInputs(design, analysis, datapath) ?? 0;
}

/**
 * The design (complete sets) as `pleat check` scores it. `mux: false` skips the control tables
 * (their cost is close to the analysis itself) and reports muxInputs as NaN.
 */
export function evaluateDesign(design: Design, options: { mux?: boolean } = {}): Evaluation {
  // The allocation table is only needed by the control tables; without them, skip it.
  const { analysis, datapath } = analyzeDatapath(design, options.mux === false ? { maxAllocationCells: 0 } : {});
  if (!analysis.retiming.feasible || !analysis.registers) {
    const why = analysis.retiming.conflict?.suggestions[0] ?? 'no retiming makes every folded delay nonnegative';
    return { feasible: false, metrics: null, analysis, reason: why };
  }
  const metrics: PlanMetrics = {
    registers: analysis.registers.minimum,
    muxInputs: options.mux === false ? NaN : muxInputs(design, analysis, datapath),
    latencyAdded: analysis.retiming.latencyAdded,
  };
  return { feasible: true, metrics, analysis };
}

/** The three metrics in the lexicographic order of the objective. */
export function objectiveKey(m: PlanMetrics, objective: PlanObjective): [number, number, number] {
  switch (objective) {
    case 'registers':
      return [m.registers, m.muxInputs, m.latencyAdded];
    case 'muxes':
      return [m.muxInputs, m.registers, m.latencyAdded];
    case 'latency':
      return [m.latencyAdded, m.registers, m.muxInputs];
  }
}

/** -1, 0 or 1: a is better, equal or worse than b in the objective's lexicographic order. */
export function compareMetrics(a: PlanMetrics, b: PlanMetrics, objective: PlanObjective): number {
  const x = objectiveKey(a, objective);
  const y = objectiveKey(b, objective);
  for (let i = 0; i < 3; i++) {
    // NaN (not counted) compares equal
    if (x[i] < y[i]) return -1;
    if (x[i] > y[i]) return 1;
  }
  return 0;
}

/** Value of the primary objective. */
export function primary(m: PlanMetrics, objective: PlanObjective): number {
  return objectiveKey(m, objective)[0];
}

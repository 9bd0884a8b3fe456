// Method: the interface of the planner (docs/planning.md): scheduling and binding of a folded DFG
// under a unit budget. Convention: plain JSON-serialisable data; the MILP solver is injected.
import type { Design, Unit } from '../types';

/** Lexicographic order: registers,muxes,latency | muxes,registers,latency | latency,registers,muxes. */
export type PlanObjective = 'registers' | 'muxes' | 'latency';

/** Metrics of a plan, as `pleat check` measures them (shared/planning/evaluate.ts). */
export interface PlanMetrics {
  /** Lifetime-analysis minimum after the retiming the check chooses. */
  registers: number;
  /** Sum over unit operand ports of the distinct sources, as the control tables count them. */
  muxInputs: number;
  /** r(outputs) - r(inputs). */
  latencyAdded: number;
}

export interface MilpSolution {
  status: 'optimal' | 'feasible' | 'infeasible' | 'timeout' | 'error';
  objective: number | null;
  /** Best bound the solver proved on the objective (its dual bound). */
  bound: number | null;
  /** Column values by the names used in the LP text. */
  values: Record<string, number>;
  /** Reduced costs by column name (linear programs solved to optimality, when asked for). */
  reducedCosts?: Record<string, number>;
  message?: string;
}

export interface MilpSolveOptions {
  /** Wall time for the whole call, loading the solver and reading the model included. */
  timeLimitSeconds: number;
  /** A known solution, by column name (may be partial): the solver may start from it or ignore it. */
  start?: Record<string, number>;
  /** For a linear program solved to optimality: also return the reduced costs of the columns. */
  duals?: boolean;
}

/** Reads a model in CPLEX LP format and solves it (the CLI wraps the `highs` npm package). */
export interface MilpSolver {
  /** Shown in the method, e.g. 'HiGHS'. */
  name?: string;
  solve(lp: string, options: MilpSolveOptions): Promise<MilpSolution>;
}

export interface PlanProgress {
  phase: string;
  done?: number;
  total?: number;
}

export interface PlanOptions {
  /** Folding factor N. */
  factor: number;
  /** The units to plan on (the CLI builds them from --units/--stages). */
  units: Unit[];
  objective: PlanObjective;
  /** Whole planning budget (the CLI's default is 30). */
  timeLimitSeconds: number;
  /** Absent: heuristic only. */
  solver?: MilpSolver;
  /** Millisecond clock, injected (the engine has no I/O); default Date.now. */
  now?: () => number;
  onProgress?: (p: PlanProgress) => void;
  /** Cooperative cancel (server jobs): checked between steps. */
  signal?: { aborted: boolean };
  /** Largest design (operations) given to the exact model; default EXACT_MAX_OPERATIONS (shared/planning/plan.ts). */
  exactMaxOperations?: number;
}

export interface PlanResult {
  status: 'optimal' | 'feasible' | 'infeasible';
  /** e.g. 'exact: mixed-integer model (HiGHS)' or 'heuristic: ...'. */
  method: string;
  factor: number;
  units: Unit[];
  /** Complete, ready for folding.sets ({} when infeasible). */
  sets: Record<string, (string | null)[]>;
  /** Real metrics by the engine of the returned plan. */
  objective: PlanMetrics | null;
  /** Proven lower bound(s), at least on the primary objective. */
  bound: Partial<PlanMetrics> | null;
  /** 0 when optimal; on the primary objective: 100 * (value - bound) / value (0 when both are 0). */
  gapPercent: number | null;
  /** Operation ids kept where the design placed them. */
  pins: string[];
  /** When infeasible: why, in the design's terms. */
  reasons: string[];
  suggestion: { factor?: number; units?: Record<string, number> } | null;
  seconds: number;
  /** Notes on how the result was reached (solver status, fall-backs), for people. */
  notes?: string[];
}

export interface SweepRow {
  factor: number;
  units: Record<string, number>;
  plan: PlanResult;
  /** Operations / (units * N); null when no plan. */
  utilization: number | null;
  /** clock_ns * N; null without clock_ns. */
  samplePeriodNs: number | null;
  /** On the Pareto front over (total units, registers, sample period). */
  pareto: boolean;
}

export type SweepOptions = Omit<PlanOptions, 'factor' | 'units'> & {
  factors: number[];
  units: 'auto' | Record<string, number>;
  /** Stages of units the sweep makes, per kind (default: the design's unit of that kind, else 0). */
  stages?: Record<string, number>;
  /** Most units tried per kind above ceil(operations / N) before giving up on that N; default 8. */
  maxExtraUnits?: number;
};

export type { Design, Unit };

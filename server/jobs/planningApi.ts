// The planning engine's API (shared/planning/, built on another branch), restated here until it
// is merged; afterwards this file only re-exports the engine's own types and functions.
import type { Design, Unit } from '../../shared/types';

export type PlanObjective = 'registers' | 'muxes' | 'latency';
export interface PlanMetrics { registers: number; muxInputs: number; latencyAdded: number }
export interface MilpSolution { status: 'optimal' | 'feasible' | 'infeasible' | 'timeout' | 'error'; objective: number | null; bound: number | null; values: Record<string, number>; message?: string }
export interface MilpSolver { solve(lp: string, options: { timeLimitSeconds: number }): Promise<MilpSolution> }
export interface PlanProgress { phase: string; done?: number; total?: number }
export interface PlanOptions {
  factor: number; units: Unit[]; objective: PlanObjective; timeLimitSeconds: number; solver?: MilpSolver; now?: () => number;
  onProgress?: (p: PlanProgress) => void; signal?: { readonly aborted: boolean };
}
export interface PlanResult {
  status: 'optimal' | 'feasible' | 'infeasible'; method: string; factor: number; units: Unit[]; sets: Record<string, (string | null)[]>;
  objective: PlanMetrics | null; bound: Partial<PlanMetrics> | null; gapPercent: number | null; pins: string[]; reasons: string[];
  suggestion: { factor?: number; units?: Record<string, number> } | null; seconds: number;
}
export interface SweepRow { factor: number; units: Record<string, number>; plan: PlanResult; utilization: number | null; samplePeriodNs: number | null; pareto: boolean }
export type SweepOptions = Omit<PlanOptions, 'factor' | 'units'> & { factors: number[]; units: 'auto' | Record<string, number>; stages?: Record<string, number> };
export type PlanDesign = (design: Design, options: PlanOptions) => Promise<PlanResult>;
export type SweepDesign = (design: Design, options: SweepOptions) => Promise<SweepRow[]>;

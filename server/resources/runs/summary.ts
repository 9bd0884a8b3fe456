// The numbers kept beside each stored report, so that history pages and comparisons read a few
// columns instead of the report JSON.
import type { DesignReport, Report, Status } from '../../../shared/types';

export interface DesignSummary {
  designName: string;
  file: string;
  status: Status;
  utilization: number | null;
  registerMinimum: number | null;
  negativeEdgeCount: number | null;
  retimingFeasible: boolean | null;
  violationCount: number;
  /** The plan: folding factor, number of units, iterations of latency that retiming adds. */
  factor: number | null;
  unitCount: number | null;
  latencyAdded: number | null;
}

export interface RunSummary {
  designCount: number;
  failedCount: number;
  errorCount: number;
  /** Mean of the designs' overall utilization (designs that have one). */
  utilization: number | null;
  /** Sum of the designs' lifetime-analysis register minimum (designs that have one). */
  registerMinimum: number | null;
  violationCount: number;
}

/** An integer that fits PostgreSQL's integer column, else null (the report's other fields are not checked this far). */
const int32 = (v: unknown, min: number): number | null => (typeof v === 'number' && Number.isInteger(v) && v >= min && v <= 2_147_483_647 ? v : null);

export function summarizeDesign(d: DesignReport): DesignSummary {
  const edges = Array.isArray(d.edges) ? d.edges : null;
  return {
    designName: d.name ?? d.file,
    file: d.file,
    status: d.status,
    utilization: typeof d.utilization?.overall === 'number' ? d.utilization.overall : null,
    registerMinimum: typeof d.registers?.minimum === 'number' ? d.registers.minimum : null,
    negativeEdgeCount: edges ? edges.filter((e) => typeof e.foldedDelay === 'number' && e.foldedDelay < 0).length : null,
    retimingFeasible: typeof d.retiming?.feasible === 'boolean' ? d.retiming.feasible : null,
    violationCount: Array.isArray(d.violations) ? d.violations.length : 0,
    factor: int32(d.factor, 1),
    unitCount: Array.isArray(d.schedule) ? d.schedule.length : null,
    latencyAdded: int32(d.retiming?.latencyAdded, -2_147_483_647),
  };
}

export function summarizeRun(designs: DesignSummary[]): RunSummary {
  const utils = designs.map((d) => d.utilization).filter((u): u is number => u !== null);
  const regs = designs.map((d) => d.registerMinimum).filter((r): r is number => r !== null);
  return {
    designCount: designs.length,
    failedCount: designs.filter((d) => d.status === 'fail').length,
    errorCount: designs.filter((d) => d.status === 'error').length,
    utilization: utils.length ? utils.reduce((a, b) => a + b, 0) / utils.length : null,
    registerMinimum: regs.length ? regs.reduce((a, b) => a + b, 0) : null,
    violationCount: designs.reduce((a, d) => a + d.violationCount, 0),
  };
}

export function summarizeReport(report: Report): { designs: DesignSummary[]; run: RunSummary } {
  const designs = report.designs.map(summarizeDesign);
  return { designs, run: summarizeRun(designs) };
}

// How a stored run and its design rows leave the server (RunListItem, RunDesignRow of
// shared/report/api.ts), and the history's cursor. history.ts writes the same in SQL.
import type { RunDesignRow, RunListItem } from '../../../shared/report/api';
import type { Sent } from '../../http/present';
import type { DesignRow, RunRow } from './compare';

export function presentRun(r: RunRow): Sent<Omit<RunListItem, 'designs'>> {
  return {
    id: r.id,
    branch: r.branch,
    commit: r.commit,
    baseBranch: r.base_branch,
    baseCommit: r.base_commit,
    verdict: r.verdict,
    toolVersion: r.tool_version,
    createdAt: r.created_at,
    message: r.commit_message,
    author: r.commit_author,
    utilizationFloor: r.utilization_floor,
    summary: {
      designs: r.design_count,
      failed: r.failed_count,
      errors: r.error_count,
      utilization: r.utilization,
      registerMinimum: r.register_minimum,
      violations: r.violation_count,
    },
  };
}

export function presentDesign(d: DesignRow): RunDesignRow {
  return {
    name: d.design_name,
    file: d.file,
    status: d.status,
    utilization: d.utilization,
    registerMinimum: d.register_minimum,
    negativeEdges: d.negative_edge_count,
    retimingFeasible: d.retiming_feasible,
    violations: d.violation_count,
    factor: d.factor,
    units: d.unit_count,
    latencyAdded: d.latency_added,
    // Only when a summary was attached, so a row without one reads as it always did.
    ...(d.hardware ? { hardware: d.hardware } : {}),
  };
}

/** Cursor of the history: "<created_at ISO>,<id>" of the last run of the previous page. */
export function encodeCursor(r: { created_at: Date; id: number }): string {
  return `${r.created_at.toISOString()},${r.id}`;
}


// What changed between a run and the run of its base branch. The base is the base branch's run at
// the merge-base commit the CLI sent; else the base branch's nearest run uploaded before this one.
import { QueryTypes } from 'sequelize';
import type { Basis, Comparison, DesignDelta, DesignHardware, Metric, Regression } from '../../../shared/report/api';
import type { Status } from '../../../shared/types';
import type { AppContext } from '../../context';

export type { Basis, Comparison, DesignDelta, Metric, Regression };

export interface RunRow {
  id: number;
  project_id: number;
  branch: string;
  commit: string;
  base_branch: string | null;
  base_commit: string | null;
  verdict: Status;
  tool_version: string;
  design_count: number;
  failed_count: number;
  error_count: number;
  utilization: number | null;
  register_minimum: number | null;
  violation_count: number;
  commit_message: string | null;
  commit_author: string | null;
  utilization_floor: number | null;
  created_at: Date;
}

export interface DesignRow {
  run_id: number;
  design_name: string;
  file: string;
  status: Status;
  utilization: number | null;
  register_minimum: number | null;
  negative_edge_count: number | null;
  retiming_feasible: boolean | null;
  violation_count: number;
  factor: number | null;
  unit_count: number | null;
  latency_added: number | null;
  /** Only where the query joins run_design_hardware (the branch history): the design's summary of pleat rtl --area. */
  hardware?: DesignHardware | null;
}

/** The columns of run_designs a DesignRow holds. */
export const DESIGN_COLUMNS = `run_id, design_name, file, status, utilization, register_minimum, negative_edge_count, retiming_feasible,
  violation_count, factor, unit_count, latency_added`;

export const RUN_COLUMNS = `id, project_id, branch, commit, base_branch, base_commit, verdict, tool_version, design_count,
  failed_count, error_count, utilization, register_minimum, violation_count, commit_message, commit_author, utilization_floor, created_at`;

const metric = (current: number | null, base: number | null): Metric => ({
  current, base, delta: current !== null && base !== null ? current - base : null,
});

/**
 * Pure: per-design deltas between two runs' design rows. Utilization regresses when it drops by
 * more than `tolerance` times the base value; the register minimum when it grows by more than
 * that; violations when there are more; status when a passing design no longer passes.
 */
export function compareDesigns(current: DesignRow[], base: DesignRow[], tolerance: number): DesignDelta[] {
  const byName = new Map(base.map((d) => [d.design_name, d]));
  const out: DesignDelta[] = [];
  for (const d of current) {
    const b = byName.get(d.design_name) ?? null;
    byName.delete(d.design_name);
    const regressions: Regression[] = [];
    if (b) {
      if (b.status === 'pass' && d.status !== 'pass') regressions.push('status');
      if (b.utilization !== null && d.utilization !== null && b.utilization - d.utilization > tolerance * b.utilization + 1e-12) regressions.push('utilization');
      if (b.register_minimum !== null && d.register_minimum !== null && d.register_minimum - b.register_minimum > tolerance * b.register_minimum + 1e-12) regressions.push('registerMinimum');
      if (d.violation_count > b.violation_count) regressions.push('violations');
    }
    out.push({
      name: d.design_name, file: d.file, presence: b ? 'kept' : 'added', status: d.status, baseStatus: b?.status ?? null,
      utilization: metric(d.utilization, b?.utilization ?? null),
      registerMinimum: metric(d.register_minimum, b?.register_minimum ?? null),
      violations: metric(d.violation_count, b?.violation_count ?? null),
      factor: metric(d.factor, b?.factor ?? null),
      units: metric(d.unit_count, b?.unit_count ?? null),
      negativeEdges: metric(d.negative_edge_count, b?.negative_edge_count ?? null),
      latencyAdded: metric(d.latency_added, b?.latency_added ?? null),
      retimingFeasible: { current: d.retiming_feasible, base: b?.retiming_feasible ?? null },
      regressions,
    });
  }
  for (const b of byName.values()) {
    out.push({
      name: b.design_name, file: b.file, presence: 'removed', status: null, baseStatus: b.status,
      utilization: metric(null, b.utilization), registerMinimum: metric(null, b.register_minimum),
      violations: metric(null, b.violation_count), factor: metric(null, b.factor), units: metric(null, b.unit_count),
      negativeEdges: metric(null, b.negative_edge_count), latencyAdded: metric(null, b.latency_added),
      retimingFeasible: { current: null, base: b.retiming_feasible }, regressions: [],
    });
  }
  return out;
}

export async function loadDesignRows(ctx: AppContext, runIds: number[]): Promise<DesignRow[]> {
  if (!runIds.length) return [];
  return ctx.db.sequelize.query<DesignRow>(
    `SELECT ${DESIGN_COLUMNS}
     FROM run_designs WHERE run_id = ANY($1::int[]) ORDER BY run_id, id`,
    { bind: [runIds], type: QueryTypes.SELECT },
  );
}

/** Finds the run to compare with and says how it was chosen. */
export async function findBaseRun(ctx: AppContext, run: RunRow, projectBaseBranch: string): Promise<{ basis: Basis; baseBranch: string; base: RunRow | null }> {
  const baseBranch = run.base_branch ?? projectBaseBranch;
  const q = ctx.db.sequelize;
  if (run.base_commit) {
    const [atMergeBase] = await q.query<RunRow>(
      `SELECT ${RUN_COLUMNS} FROM runs WHERE project_id = $1 AND branch = $2 AND commit = $3 AND id <> $4`,
      { bind: [run.project_id, baseBranch, run.base_commit, run.id], type: QueryTypes.SELECT },
    );
    if (atMergeBase) return { basis: 'merge-base', baseBranch, base: atMergeBase };
  }
  const [earlier] = await q.query<RunRow>(
    `SELECT ${RUN_COLUMNS} FROM runs WHERE project_id = $1 AND branch = $2 AND (created_at, id) < ($3, $4)
     ORDER BY created_at DESC, id DESC LIMIT 1`,
    { bind: [run.project_id, baseBranch, run.created_at, run.id], type: QueryTypes.SELECT },
  );
  if (earlier) return { basis: 'nearest-earlier', baseBranch, base: earlier };
  return { basis: 'none', baseBranch, base: null };
}

/** The comparison of a run with its base, and the run's own design rows (read in the same query). */
export async function compareRun(ctx: AppContext, run: RunRow, project: { baseBranch: string; regressionTolerance: number }): Promise<{ comparison: Comparison; designs: DesignRow[] }> {
  const { basis, baseBranch, base } = await findBaseRun(ctx, run, project.baseBranch);
  const rows = await loadDesignRows(ctx, base ? [run.id, base.id] : [run.id]);
  const current = rows.filter((r) => r.run_id === run.id);
  const previous = base ? rows.filter((r) => r.run_id === base.id) : [];
  return {
    comparison: {
      basis,
      baseBranch,
      baseRun: base ? { id: base.id, commit: base.commit, verdict: base.verdict, createdAt: base.created_at.toISOString() } : null,
      tolerance: project.regressionTolerance,
      designs: base ? compareDesigns(current, previous, project.regressionTolerance) : [],
    },
    designs: current,
  };
}

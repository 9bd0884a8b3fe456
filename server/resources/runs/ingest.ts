// Stores one uploaded report as a run. One run per (project, branch, commit): a second upload of
// the same commit, also a concurrent one, returns the first run instead of adding another.
import { QueryTypes } from 'sequelize';
import type { Report } from '../../../shared/types';
import type { AppContext } from '../../context';
import type { Project } from '../../db/models';
import { RUN_COLUMNS, type RunRow } from './compare';
import { summarizeReport } from './summary';

/** The first line of a commit's message, or its author, bounded: shown in lists, not kept in full. */
function commitMeta(v: unknown, max: number): string | null {
  if (typeof v !== 'string') return null;
  const line = v.split(/\r?\n/, 1)[0]!.trim();
  return line ? line.slice(0, max) : null;
}

export interface StoredRun {
  id: number;
  created: boolean;
  createdAt: Date;
  row: RunRow;
}

/**
 * One statement does it all (the run, its design rows, the branch pointer), so the branch row that
 * every upload to a branch updates is locked only for that statement: uploads to one branch do not
 * queue behind each other's round trips.
 */
export async function ingestRun(ctx: AppContext, project: Project, report: Report, opts: { createdAt?: Date } = {}): Promise<StoredRun> {
  const { designs, run } = summarizeReport(report);
  const git = report.git;
  const branch = git.branch!;
  const commit = git.commit!.toLowerCase();
  const floor = report.rules?.min_utilization?.value;
  const q = ctx.db.sequelize;
  const inserted = await q.query<RunRow>(
    `WITH ins AS (
       INSERT INTO runs (project_id, branch, commit, base_branch, base_commit, verdict, tool_version, design_count,
                         failed_count, error_count, utilization, register_minimum, violation_count, report, created_at,
                         commit_message, commit_author, utilization_floor)
       VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12, $13, $14::jsonb, coalesce($15::timestamptz, now()), $27, $28, $29)
       ON CONFLICT ON CONSTRAINT runs_one_per_commit DO NOTHING
       RETURNING ${RUN_COLUMNS}
     ), designs AS (
       INSERT INTO run_designs (run_id, design_name, file, status, utilization, register_minimum, negative_edge_count,
                                retiming_feasible, violation_count, factor, unit_count, latency_added)
       SELECT ins.id, d.* FROM ins,
         unnest($16::text[], $17::text[], $18::text[], $19::float8[], $20::int[], $21::int[], $22::bool[], $23::int[],
                $24::int[], $25::int[], $26::int[]) AS d
     ), branch AS (
       INSERT INTO branches (project_id, name, last_run_id, last_run_at)
       SELECT project_id, branch, id, created_at FROM ins
       ON CONFLICT (project_id, name) DO UPDATE SET last_run_id = EXCLUDED.last_run_id, last_run_at = EXCLUDED.last_run_at
       WHERE (branches.last_run_at, coalesce(branches.last_run_id, 0)) < (EXCLUDED.last_run_at, EXCLUDED.last_run_id)
     )
     SELECT * FROM ins`,
    {
      bind: [
        project.id, branch, commit, git.baseBranch ?? null, git.baseCommit?.toLowerCase() ?? null, report.verdict,
        report.tool.version, run.designCount, run.failedCount, run.errorCount, run.utilization, run.registerMinimum,
        run.violationCount, JSON.stringify(report), opts.createdAt ?? null,
        designs.map((d) => d.designName), designs.map((d) => d.file), designs.map((d) => d.status),
        designs.map((d) => d.utilization), designs.map((d) => d.registerMinimum), designs.map((d) => d.negativeEdgeCount),
        designs.map((d) => d.retimingFeasible), designs.map((d) => d.violationCount),
        designs.map((d) => d.factor), designs.map((d) => d.unitCount), designs.map((d) => d.latencyAdded),
        commitMeta(git.message, 500), commitMeta(git.author, 200), typeof floor === 'number' && Number.isFinite(floor) ? floor : null,
      ],
      type: QueryTypes.SELECT,
    },
  );
  const row = inserted[0];
  if (row) return { id: row.id, created: true, createdAt: row.created_at, row };
  // Uploaded before (or by a concurrent request that committed first): keep the first run.
  const [existing] = await q.query<RunRow>(
    `SELECT ${RUN_COLUMNS} FROM runs WHERE project_id = $1 AND branch = $2 AND commit = $3`,
    { bind: [project.id, branch, commit], type: QueryTypes.SELECT },
  );
  return { id: existing!.id, created: false, createdAt: existing!.created_at, row: existing! };
}

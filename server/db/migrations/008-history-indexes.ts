// Covering indexes of the branch history page (docs/server.md, "Performance"): the page of runs
// and the design rows beside each come from index-only scans, without visiting the table rows
// (runs rows carry the stored report, so each heap visit reads a large row). They replace the
// narrower indexes on the same leading columns.
import type { Migration } from './types';

export const up: Migration = async ({ context: sequelize }) => {
  await sequelize.query(`
CREATE INDEX runs_history_cover ON runs (project_id, branch, created_at DESC, id DESC)
  INCLUDE (commit, base_branch, base_commit, verdict, tool_version, design_count, failed_count, error_count,
           utilization, register_minimum, violation_count, commit_message, commit_author, utilization_floor);
DROP INDEX IF EXISTS runs_history;
CREATE INDEX run_designs_run_cover ON run_designs (run_id, id)
  INCLUDE (design_name, file, status, utilization, register_minimum, negative_edge_count, retiming_feasible, violation_count,
           factor, unit_count, latency_added);
DROP INDEX IF EXISTS run_designs_run;
`);
};

export const down: Migration = async ({ context: sequelize }) => {
  await sequelize.query(`
CREATE INDEX IF NOT EXISTS runs_history ON runs (project_id, branch, created_at DESC, id DESC);
CREATE INDEX IF NOT EXISTS run_designs_run ON run_designs (run_id);
DROP INDEX IF EXISTS runs_history_cover, run_designs_run_cover;
`);
};

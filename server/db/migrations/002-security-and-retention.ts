// Session epochs, retention of branch runs, and indexes for the pruning job (docs/server.md,
// "Data" and "Retention"). Numbered 002: the job queue adds its own migration after this one.
import type { Migration } from './types';

export const up: Migration = async ({ context: sequelize }) => {
  await sequelize.query(`
-- Every session token carries the epoch of its account at sign-in; deactivating the account
-- raises the epoch, so sessions issued before stay dead when the account is reactivated.
ALTER TABLE users ADD COLUMN session_epoch integer NOT NULL DEFAULT 0;

-- Days that runs of branches other than the base branch are kept; null keeps them for ever.
ALTER TABLE projects ADD COLUMN branch_run_days integer CHECK (branch_run_days BETWEEN 1 AND 36500);

CREATE INDEX runs_age ON runs (project_id, created_at, id);
CREATE INDEX invitations_expiry ON invitations (expires_at);
CREATE INDEX revoked_sessions_expiry ON revoked_sessions (expires_at);
CREATE INDEX rate_limits_reset ON rate_limits (reset_at);
`);
};

export const down: Migration = async ({ context: sequelize }) => {
  await sequelize.query(`
DROP INDEX IF EXISTS runs_age, invitations_expiry, revoked_sessions_expiry, rate_limits_reset;
ALTER TABLE projects DROP COLUMN IF EXISTS branch_run_days;
ALTER TABLE users DROP COLUMN IF EXISTS session_epoch;
`);
};

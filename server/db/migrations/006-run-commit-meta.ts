// The commit's message (first line) and author beside each run, and the utilization floor the
// run was checked against (min_utilization of its effective rules), so the branch history shows
// them without reading each stored report (docs/server.md, "Data"). Earlier runs are filled from
// their reports; the CLI sends message and author since report.git grew them (older CLIs: null).
import type { Migration } from './types';

export const up: Migration = async ({ context: sequelize }) => {
  await sequelize.query(`
ALTER TABLE runs ADD COLUMN commit_message text, ADD COLUMN commit_author text, ADD COLUMN utilization_floor double precision;

UPDATE runs SET
  commit_message = CASE WHEN jsonb_typeof(report->'git'->'message') = 'string' THEN left(split_part(report->'git'->>'message', E'\\n', 1), 500) END,
  commit_author = CASE WHEN jsonb_typeof(report->'git'->'author') = 'string' THEN left(report->'git'->>'author', 200) END,
  utilization_floor = CASE WHEN jsonb_typeof(report->'rules'->'min_utilization'->'value') = 'number'
                           THEN (report->'rules'->'min_utilization'->>'value')::double precision END;
`);
};

export const down: Migration = async ({ context: sequelize }) => {
  await sequelize.query('ALTER TABLE runs DROP COLUMN IF EXISTS commit_message, DROP COLUMN IF EXISTS commit_author, DROP COLUMN IF EXISTS utilization_floor');
};

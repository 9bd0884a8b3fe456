// Why a rule was changed, and which earlier state a revert went back to (docs/server.md, Team rules).
import type { Migration } from './types';

export const up: Migration = async ({ context: sequelize }) => {
  await sequelize.query(`
ALTER TABLE rule_changes ADD COLUMN reason text CHECK (char_length(reason) <= 500);
-- A change made by a revert names the change whose state it went back to.
ALTER TABLE rule_changes ADD COLUMN revert_of integer REFERENCES rule_changes(id) ON DELETE SET NULL;
`);
};

export const down: Migration = async ({ context: sequelize }) => {
  await sequelize.query('ALTER TABLE rule_changes DROP COLUMN IF EXISTS revert_of, DROP COLUMN IF EXISTS reason;');
};

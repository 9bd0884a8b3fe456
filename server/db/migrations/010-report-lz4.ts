// Stored reports compressed with LZ4 instead of PostgreSQL's default pglz (TOAST, PostgreSQL 14+):
// an upload's report (30 KiB and more) is compressed when it is written, and LZ4 takes about half
// the CPU time of pglz for it (measured: docs/performance.md, "Server"). Rows written before keep
// their pglz values, which read as before. A PostgreSQL built without LZ4 keeps pglz.
import type { Migration } from './types';

export const up: Migration = async ({ context: sequelize }) => {
  await sequelize.query(`
DO $$ BEGIN
  ALTER TABLE runs ALTER COLUMN report SET COMPRESSION lz4;
EXCEPTION WHEN feature_not_supported THEN NULL;
END $$;
`);
};

export const down: Migration = async ({ context: sequelize }) => {
  await sequelize.query('ALTER TABLE runs ALTER COLUMN report SET COMPRESSION default');
};

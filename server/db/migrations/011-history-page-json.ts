// The branch history page's JSON text of each run and design row, written once with the row
// instead of at every read of a page (docs/server.md, "Data"; docs/performance.md, "Server",
// "Third round"): a `page_json` column on runs, run_designs and run_design_hardware, kept by
// triggers on INSERT and UPDATE (server/resources/runs/pageJson.ts). Rows stored before are filled
// by the same triggers (an UPDATE of every row), so old and new rows have the same text.
import { pageJsonTriggers } from '../../resources/runs/pageJson';
import type { Migration } from './types';

export const up: Migration = async ({ context: sequelize }) => {
  await sequelize.query(`
ALTER TABLE runs ADD COLUMN page_json text;
ALTER TABLE run_designs ADD COLUMN page_json text;
ALTER TABLE run_design_hardware ADD COLUMN page_json text;
${pageJsonTriggers()}
UPDATE runs SET page_json = NULL;
UPDATE run_designs SET page_json = NULL;
UPDATE run_design_hardware SET page_json = NULL;
ALTER TABLE runs ALTER COLUMN page_json SET NOT NULL;
ALTER TABLE run_designs ALTER COLUMN page_json SET NOT NULL;
ALTER TABLE run_design_hardware ALTER COLUMN page_json SET NOT NULL;
`);
};

export const down: Migration = async ({ context: sequelize }) => {
  await sequelize.query(`
DROP TRIGGER IF EXISTS runs_page_json ON runs;
DROP TRIGGER IF EXISTS run_designs_page_json ON run_designs;
DROP TRIGGER IF EXISTS run_design_hardware_page_json ON run_design_hardware;
DROP FUNCTION IF EXISTS pleat_runs_page_json(), pleat_run_designs_page_json(), pleat_run_design_hardware_page_json();
ALTER TABLE runs DROP COLUMN IF EXISTS page_json;
ALTER TABLE run_designs DROP COLUMN IF EXISTS page_json;
ALTER TABLE run_design_hardware DROP COLUMN IF EXISTS page_json;
`);
};

// Area and timing of `pleat rtl --area` per run and design (docs/server.md, "Data"): the
// hardware summary an upload carries as designs[].hardware (shared/report/hardwareSummary.ts),
// its figures in columns for the branch history, the whole summary beside them. Runs stored
// before have none: no CLI sent a summary before this table.
import type { Migration } from './types';

export const up: Migration = async ({ context: sequelize }) => {
  await sequelize.query(`
CREATE TABLE run_design_hardware (
  run_design_id integer PRIMARY KEY REFERENCES run_designs(id) ON DELETE CASCADE,
  version integer NOT NULL,
  folded_cells integer NOT NULL,
  folded_flip_flops integer NOT NULL,
  folded_depth integer,
  folded_factor integer NOT NULL,
  parallel_cells integer NOT NULL,
  parallel_flip_flops integer NOT NULL,
  parallel_depth integer,
  parallel_factor integer NOT NULL,
  summary jsonb NOT NULL
);
`);
};

export const down: Migration = async ({ context: sequelize }) => {
  await sequelize.query('DROP TABLE IF EXISTS run_design_hardware');
};

// The plan's own figures beside each design of a run, so the run page can say what moved in the
// plan (factor, units, latency added by retiming) without reading two reports (docs/server.md, "Data").
// Runs stored before are filled from their reports, matched by design name.
import type { Migration } from './types';

export const up: Migration = async ({ context: sequelize }) => {
  await sequelize.query(`
ALTER TABLE run_designs ADD COLUMN factor integer, ADD COLUMN unit_count integer, ADD COLUMN latency_added integer;

UPDATE run_designs rd SET
  factor = CASE WHEN jsonb_typeof(d->'factor') = 'number' AND (d->>'factor')::numeric BETWEEN 1 AND 2147483647 THEN (d->>'factor')::numeric::integer END,
  unit_count = CASE WHEN jsonb_typeof(d->'schedule') = 'array' THEN jsonb_array_length(d->'schedule') END,
  latency_added = CASE WHEN jsonb_typeof(d->'retiming'->'latencyAdded') = 'number' AND abs((d->'retiming'->>'latencyAdded')::numeric) <= 2147483647
                       THEN (d->'retiming'->>'latencyAdded')::numeric::integer END
FROM runs r, jsonb_array_elements(CASE WHEN jsonb_typeof(r.report->'designs') = 'array' THEN r.report->'designs' ELSE '[]'::jsonb END) AS d
WHERE rd.run_id = r.id AND rd.design_name = coalesce(d->>'name', d->>'file');
`);
};

export const down: Migration = async ({ context: sequelize }) => {
  await sequelize.query('ALTER TABLE run_designs DROP COLUMN IF EXISTS factor, DROP COLUMN IF EXISTS unit_count, DROP COLUMN IF EXISTS latency_added');
};

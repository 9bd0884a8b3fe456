// The hardware summaries of an upload (designs[].hardware, checked by the upload schema) stored
// per run and design in run_design_hardware (migration 009). A statement of its own after the
// run is stored, only for uploads that carry a summary; it is idempotent (ON CONFLICT DO
// NOTHING), so a repeated upload of the same commit fills in what a first one left out.
import type { Report } from '../../../shared/types';
import type { AppContext } from '../../context';

/** Stores the summaries of the report's designs for the run; returns how many rows were written. */
export async function storeHardware(ctx: AppContext, runId: number, report: Report): Promise<number> {
  const rows = report.designs.flatMap((d) => (d.hardware ? [{ name: d.name ?? d.file, file: d.file, h: d.hardware }] : []));
  if (!rows.length) return 0;
  const [, count] = await ctx.db.sequelize.query(
    `INSERT INTO run_design_hardware (run_design_id, version, folded_cells, folded_flip_flops, folded_depth, folded_factor,
                                      parallel_cells, parallel_flip_flops, parallel_depth, parallel_factor, summary)
     SELECT DISTINCT ON (rd.id) rd.id, h.version, h.fc, h.ff, h.fd, h.fn, h.pc, h.pf, h.pd, h.pn, h.summary::jsonb
     FROM unnest($2::text[], $3::text[], $4::int[], $5::int[], $6::int[], $7::int[], $8::int[], $9::int[], $10::int[], $11::int[], $12::int[], $13::text[])
       AS h(name, file, version, fc, ff, fd, fn, pc, pf, pd, pn, summary)
     JOIN run_designs rd ON rd.run_id = $1 AND rd.design_name = h.name AND rd.file = h.file
     ORDER BY rd.id
     ON CONFLICT (run_design_id) DO NOTHING`,
    {
      bind: [
        runId, rows.map((r) => r.name), rows.map((r) => r.file), rows.map((r) => r.h.version),
        rows.map((r) => r.h.folded.cells), rows.map((r) => r.h.folded.flipFlops), rows.map((r) => r.h.folded.depth), rows.map((r) => r.h.folded.factor),
        rows.map((r) => r.h.parallel.cells), rows.map((r) => r.h.parallel.flipFlops), rows.map((r) => r.h.parallel.depth), rows.map((r) => r.h.parallel.factor),
        rows.map((r) => JSON.stringify(r.h)),
      ],
    },
  );
  return typeof count === 'number' ? count : 0;
}

/** The SQL of one design row's hardware as the API shows it (DesignHardware), for `rd` a run_designs row. */
export const HARDWARE_JSON = `(SELECT json_build_object('version', h.version,
    'folded', json_build_object('cells', h.folded_cells, 'flipFlops', h.folded_flip_flops, 'depth', h.folded_depth, 'factor', h.folded_factor),
    'parallel', json_build_object('cells', h.parallel_cells, 'flipFlops', h.parallel_flip_flops, 'depth', h.parallel_depth, 'factor', h.parallel_factor))
  FROM run_design_hardware h WHERE h.run_design_id = rd.id)`;

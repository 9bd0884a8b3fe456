// The branch history page as PostgreSQL writes it: the whole JSON body of RunPage
// (shared/report/api.ts), in the shape, key order and number and date notation of the presenters
// (presentRun, presentDesign, encodeCursor in routes.ts), joined in the query that reads the page
// from the JSON text each row was given when it was written (pageJson.ts), and sent as text. The
// server then neither parses the rows (dates, numbers, the designs' JSON) nor serialises them
// again. history.test.ts holds it to the presenters, byte for byte.
import { QueryTypes } from 'sequelize';
import type { RunPage } from '../../../shared/report/api';
import type { AppContext } from '../../context';
import { jsonText, type JsonText } from '../../http/present';
import { RUN_COLUMNS, type DesignRow, type RunRow } from './compare';
import { HARDWARE_JSON } from './hardware';
import { encodeCursor, presentDesign, presentRun } from './present';

export interface HistoryQuery {
  branch: string;
  at: { at: Date; id: number } | null;
  design: string | undefined;
  limit: number;
  offset: number;
}


/**
 * Which runs a page holds (the branch, before the cursor, with the design when filtered on
 * `runs`) and which design rows each shows (`rd`), for both ways of writing the page.
 */
function pageFilter(projectId: string, param: (v: unknown) => string, h: HistoryQuery): { where: string; designFilter: string } {
  let where = `project_id = ${projectId} AND branch = ${param(h.branch)}`;
  if (h.at) where += ` AND (created_at, id) < (${param(h.at.at)}::timestamptz, ${param(h.at.id)}::int)`;
  const designParam = h.design ? param(h.design) : '';
  if (h.design) where += ` AND EXISTS (SELECT 1 FROM run_designs d WHERE d.run_id = runs.id AND d.design_name = ${designParam})`;
  return { where, designFilter: designParam ? ` AND rd.design_name = ${designParam}` : '' };
}

/**
 * One row with one column, `page`: the RunPage JSON of the runs of `projectId` (SQL) that `h`
 * asks for, or `{"runs":[],"nextCursor":null}` when there are none (or `projectId` is NULL).
 * Bind parameters are pushed onto `bind`. The runs are read as before: `limit + 1` newest before
 * the cursor (an index-only scan of runs_history_cover), each with its design rows (of
 * run_designs_run_cover) and their hardware summaries.
 */
export function historyPageSql(projectId: string, bind: unknown[], h: HistoryQuery): string {
  const param = (v: unknown) => `$${bind.push(v)}`;
  const { where, designFilter } = pageFilter(projectId, param, h);
  const limit = param(h.limit);
  // Each run's and design row's JSON was written with the row (page_json, pageJson.ts): the page
  // only joins those texts. The page's runs are found first, by an index-only scan of
  // runs_history_cover (id and created_at are among its keys), then each one's text by its id.
  // Read in one scan, the statement's generic plan walked the project's newest runs of every
  // branch (runs_age) and filtered by branch. `OFFSET 0` keeps the look-up a nested loop: the
  // generic plan does not know the limit (it assumes a tenth of the table), and flattened into a
  // plain join it hashed the whole table (49 ms instead of 0.3, EXPLAIN ANALYZE of the generic plan).
  return `SELECT '{"runs":[' || coalesce(string_agg(p.item, ',' ORDER BY p.n) FILTER (WHERE p.n <= ${limit}::int), '')
       || '],"nextCursor":' || CASE WHEN count(*) > ${limit}::int THEN '"' || min(p.cursor) || '"' ELSE 'null' END || '}' AS page
    FROM (
      SELECT r.n, concat(r.page_json, ',"designs":[', d.designs, ']}') AS item,
             CASE WHEN r.n = ${limit}::int THEN to_char(r.created_at AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"') || ',' || r.id END AS cursor
      FROM (
        SELECT q.*, row_number() OVER (ORDER BY q.created_at DESC, q.id DESC) AS n FROM (
          SELECT k.id, k.created_at, x.page_json FROM (
            SELECT id, created_at FROM runs WHERE ${where} ORDER BY created_at DESC, id DESC LIMIT ${limit}::int + 1 OFFSET ${param(h.offset)}::int
          ) k CROSS JOIN LATERAL (SELECT page_json FROM runs WHERE runs.id = k.id OFFSET 0) x
        ) q
      ) r
      LEFT JOIN LATERAL (
        SELECT string_agg(concat(rd.page_json, h.page_json, '}'), ',' ORDER BY rd.id) AS designs
        FROM run_designs rd LEFT JOIN run_design_hardware h ON h.run_design_id = rd.id
        WHERE rd.run_id = r.id${designFilter}
      ) d ON true
    ) p`;
}

/**
 * The same page presented in JavaScript from rows read through Sequelize: the way it was sent
 * before, kept for the pages that hold a number PostgreSQL cannot write as JavaScript does
 * (jsonFloat's UNWRITTEN), and the reference of history.test.ts.
 */
export async function presentedPage(ctx: AppContext, projectId: number, h: HistoryQuery): Promise<JsonText<RunPage>> {
  const bind: unknown[] = [];
  const param = (v: unknown) => `$${bind.push(v)}`;
  const { where, designFilter } = pageFilter(param(projectId), param, h);
  const rows = await ctx.db.sequelize.query<RunRow & { designs: DesignRow[] | null }>(
    `SELECT r.*, d.designs FROM (
       SELECT ${RUN_COLUMNS} FROM runs WHERE ${where} ORDER BY created_at DESC, id DESC LIMIT ${param(h.limit + 1)}::int OFFSET ${param(h.offset)}::int
     ) r
     LEFT JOIN LATERAL (
       SELECT json_agg(json_build_object('run_id', rd.run_id, 'design_name', rd.design_name, 'file', rd.file, 'status', rd.status,
                'utilization', rd.utilization, 'register_minimum', rd.register_minimum, 'negative_edge_count', rd.negative_edge_count,
                'retiming_feasible', rd.retiming_feasible, 'violation_count', rd.violation_count, 'factor', rd.factor,
                'unit_count', rd.unit_count, 'latency_added', rd.latency_added, 'hardware', ${HARDWARE_JSON}) ORDER BY rd.id) AS designs
       FROM run_designs rd WHERE rd.run_id = r.id${designFilter}
     ) d ON true
     ORDER BY r.created_at DESC, r.id DESC`,
    { bind, type: QueryTypes.SELECT },
  );
  const page = rows.slice(0, h.limit);
  return jsonText<RunPage>({
    runs: page.map((r) => ({ ...presentRun(r), designs: (r.designs ?? []).map(presentDesign) })),
    nextCursor: rows.length > h.limit ? encodeCursor(page[page.length - 1]!) : null,
  });
}

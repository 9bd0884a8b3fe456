// GET /api/projects/:slug/branches/:branch/runs (history, cursor paging), GET /api/runs/:id (one run
// with its comparison), POST /api/projects/:slug/runs (CI upload).
import express, { Router, type Request } from 'express';
import { QueryTypes } from 'sequelize';
import type { RunDesignRow, RunListItem } from '../../../shared/report/api';
import type { Sent } from '../../http/present';
import type { Report } from '../../../shared/types';
import type { AppContext } from '../../context';
import type { Project } from '../../db/models';
import { projectAccess } from '../../http/access';
import { HttpError, allow, badRequest, notFound, unauthorized } from '../../http/errors';
import { pgLimiter } from '../../http/limits';
import { idParam } from '../../http/validate';
import { afterResponse } from '../../mail/mailer';
import { compareRun, RUN_COLUMNS, type DesignRow, type RunRow } from './compare';
import { ingestRun } from './ingest';
import { notifyWatchers } from './notify';
import { canReadRuns, canUploadRun } from './policy';
import { MAX_INT32, checkUploadReport } from '../../../shared/report/reportSchema';

/** The report's schema and storable-value check of shared/report/reportSchema.ts (the CLI runs the same before sending). */
function checkUpload(body: unknown): Report {
  const checked = checkUploadReport(body);
  if (!checked.ok) throw badRequest(`The report is not valid: ${checked.message}.`, checked.problems);
  return checked.report;
}

export function presentRun(r: RunRow): Sent<Omit<RunListItem, 'designs'>> {
  return {
    id: r.id,
    branch: r.branch,
    commit: r.commit,
    baseBranch: r.base_branch,
    baseCommit: r.base_commit,
    verdict: r.verdict,
    toolVersion: r.tool_version,
    createdAt: r.created_at,
    summary: {
      designs: r.design_count,
      failed: r.failed_count,
      errors: r.error_count,
      utilization: r.utilization,
      registerMinimum: r.register_minimum,
      violations: r.violation_count,
    },
  };
}

export function presentDesign(d: DesignRow): RunDesignRow {
  return {
    name: d.design_name,
    file: d.file,
    status: d.status,
    utilization: d.utilization,
    registerMinimum: d.register_minimum,
    negativeEdges: d.negative_edge_count,
    retimingFeasible: d.retiming_feasible,
    violations: d.violation_count,
  };
}

/** A timestamptz as JavaScript's Date.prototype.toJSON writes it (UTC, milliseconds, Z). */
const ISO_UTC = (column: string) => `to_char(${column} AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"')`;

/** Cursor of the history: "<created_at ISO>,<id>" of the last run of the previous page. */
export function encodeCursor(r: { created_at: Date; id: number }): string {
  return `${r.created_at.toISOString()},${r.id}`;
}

function decodeCursor(cursor: string): { at: Date; id: number } {
  const m = cursor.length <= 64 ? /^(\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d(?:\.\d{1,3})?Z),(\d{1,10})$/.exec(cursor) : null;
  const at = m ? new Date(m[1]!) : null;
  // An id beyond the integer column is not one this server gave out (PostgreSQL would refuse it).
  if (!m || !at || Number.isNaN(at.getTime()) || Number(m[2]) > MAX_INT32) throw badRequest('The cursor is not one this server gave out.');
  return { at, id: Number(m[2]) };
}

function limitParam(value: unknown, fallback: number, max: number): number {
  if (value === undefined) return fallback;
  const n = Number(value);
  if (!Number.isInteger(n) || n < 1 || n > max) throw badRequest(`limit must be an integer from 1 to ${max}.`);
  return n;
}

function queryString(req: Request, name: string): string | undefined {
  const v = req.query[name];
  if (v === undefined) return undefined;
  if (typeof v !== 'string') throw badRequest(`${name} must be given once.`);
  return v;
}

export function runRoutes(ctx: AppContext): Router {
  const router = Router();
  const q = ctx.db.sequelize;

  router.get('/api/projects/:slug/branches/:branch/runs', async (req, res) => {
    const { project, role } = await projectAccess(ctx, req, { slug: req.params.slug });
    allow(canReadRuns(role));
    const limit = limitParam(req.query.limit, 50, 200);
    const cursor = queryString(req, 'cursor');
    const design = queryString(req, 'design');
    const bind: unknown[] = [project.id, req.params.branch];
    let where = 'project_id = $1 AND branch = $2';
    if (cursor) {
      const c = decodeCursor(cursor);
      bind.push(c.at, c.id);
      where += ` AND (created_at, id) < ($${bind.length - 1}, $${bind.length})`;
    }
    let designParam = '';
    if (design) {
      bind.push(design);
      designParam = `$${bind.length}`;
      where += ` AND EXISTS (SELECT 1 FROM run_designs d WHERE d.run_id = runs.id AND d.design_name = ${designParam})`;
    }
    bind.push(limit + 1);
    // One round trip: the page of runs, each already in its API shape (RunListItem, as
    // presentRun and presentDesign write it) with its design rows beside it, so the server sends
    // the text PostgreSQL made instead of building an object per run and stringifying it again.
    // Both scans are index-only on the covering indexes of migration 006.
    const designFilter = designParam ? ` AND rd.design_name = ${designParam}` : '';
    const rows = await q.query<{ item: string; created_at: Date; id: number }>(
      `SELECT json_build_object(
           'id', r.id, 'branch', r.branch, 'commit', r.commit, 'baseBranch', r.base_branch, 'baseCommit', r.base_commit,
           'verdict', r.verdict, 'toolVersion', r.tool_version, 'createdAt', ${ISO_UTC('r.created_at')},
           'summary', json_build_object('designs', r.design_count, 'failed', r.failed_count, 'errors', r.error_count,
             'utilization', r.utilization, 'registerMinimum', r.register_minimum, 'violations', r.violation_count),
           'designs', coalesce(d.designs, '[]'::json))::text AS item,
         r.created_at, r.id
       FROM (
         SELECT ${RUN_COLUMNS} FROM runs WHERE ${where} ORDER BY created_at DESC, id DESC LIMIT $${bind.length}
       ) r
       LEFT JOIN LATERAL (
         SELECT json_agg(json_build_object('name', rd.design_name, 'file', rd.file, 'status', rd.status,
                  'utilization', rd.utilization, 'registerMinimum', rd.register_minimum, 'negativeEdges', rd.negative_edge_count,
                  'retimingFeasible', rd.retiming_feasible, 'violations', rd.violation_count) ORDER BY rd.id) AS designs
         FROM run_designs rd WHERE rd.run_id = r.id${designFilter}
       ) d ON true
       ORDER BY r.created_at DESC, r.id DESC`,
      { bind, type: QueryTypes.SELECT },
    );
    const page = rows.slice(0, limit);
    const nextCursor = rows.length > limit ? encodeCursor(page[page.length - 1]!) : null;
    // The body is a RunPage (shared/report/api.ts): { runs: RunListItem[], nextCursor }.
    res.type('application/json').send(`{"runs":[${page.map((r) => r.item).join(',')}],"nextCursor":${JSON.stringify(nextCursor)}}`);
  });

  router.get('/api/runs/:id', async (req, res) => {
    if (!req.actor) throw unauthorized(req.authProblem ?? 'Sign in first.', req.authProblem ? 'invalid-credentials' : 'unauthorized');
    const id = idParam(req.params.id);
    // The run's columns and its stored report as text, in one round trip.
    const [found] = id === null ? [] : await q.query<RunRow & { report_text: string }>(
      `SELECT ${RUN_COLUMNS}, report::text AS report_text FROM runs WHERE id = $1`,
      { bind: [id], type: QueryTypes.SELECT },
    );
    if (!found) throw notFound('No such run.');
    const { report_text: reportText, ...run } = found;
    const { project, role } = await projectAccess(ctx, req, { id: run.project_id });
    allow(canReadRuns(role));
    const { comparison, designs } = await compareRun(ctx, run, project);
    const head = JSON.stringify({
      run: { ...presentRun(run), project: { slug: project.slug, name: project.name }, designs: designs.map(presentDesign) },
      comparison,
    });
    // The stored report goes out as stored, without parsing it into objects and back.
    res.type('application/json').send(`${head.slice(0, -1)},"report":${reportText}}`);
  });

  // Authorise before reading a body of up to maxReportBytes.
  const uploadAccess = async (req: Request, res: express.Response, next: express.NextFunction) => {
    if (req.actor?.kind === 'user') throw new HttpError(403, 'token-required', 'Runs are uploaded by CI with a project token (Authorization: Bearer ...).');
    const { project, role } = await projectAccess(ctx, req, { slug: String(req.params.slug) });
    allow(canUploadRun(role));
    res.locals.project = project;
    next();
  };
  // Per CI token: a burst limit per minute and a quota per day, counted in PostgreSQL.
  const tokenKey = (req: Request) => String(req.actor?.kind === 'ci' ? req.actor.token.id : 0);
  const perMinute = pgLimiter(q, {
    prefix: 'upload-minute:', windowMs: 60_000, limit: ctx.config.upload.perMinute, key: tokenKey,
    message: `At most ${ctx.config.upload.perMinute} uploads a minute per CI token.`,
  });
  const perDay = pgLimiter(q, {
    prefix: 'upload-day:', windowMs: 24 * 3600_000, limit: ctx.config.upload.perDay, key: tokenKey,
    message: `This CI token has used its quota of ${ctx.config.upload.perDay} uploads a day.`,
  });
  router.post('/api/projects/:slug/runs', uploadAccess, perMinute, perDay, express.json({ limit: ctx.config.maxReportBytes }), async (req, res) => {
    const project = res.locals.project as Project;
    const report = checkUpload(req.body);
    const stored = await ingestRun(ctx, project, report);
    const run = stored.row;
    if (stored.created) afterResponse(res, ctx.mail, () => notifyWatchers(ctx, project, stored.row));
    res.status(stored.created ? 201 : 200).json({
      created: stored.created,
      run: presentRun(run),
      url: `${ctx.config.publicUrl}/projects/${encodeURIComponent(project.slug)}/runs/${run.id}`,
    });
  });

  return router;
}

// GET /api/projects/:slug/branches/:branch/runs (history, cursor paging), GET /api/runs/:id (one run
// with its comparison), POST /api/projects/:slug/runs (CI upload).
import express, { Router, type Request } from 'express';
import { QueryTypes } from 'sequelize';
import type { RunDetail, RunPage, UploadResult } from '../../../shared/report/api';
import { send, sendText, type JsonText, type Sent } from '../../http/present';
import type { Report } from '../../../shared/types';
import type { AppContext } from '../../context';
import type { Project } from '../../db/models';
import { projectAccess } from '../../http/access';
import { resolveCaller } from '../../http/auth';
import { HttpError, allow, badRequest, notFound, unauthorized } from '../../http/errors';
import { pgLimits } from '../../http/limits';
import { idParam } from '../../http/validate';
import { afterResponse } from '../../mail/mailer';
import { compareRun, RUN_COLUMNS, type RunRow } from './compare';
import { DOWNLOADS, edgesCsv, fileStem, rtlZip, scheduleCsv, type Download } from './downloads';
import { historyPageSql, presentedPage, type HistoryQuery } from './history';
import { ingestRun } from './ingest';
import { presentDesign, presentRun } from './present';
import { UNWRITTEN } from '../../db/jsonSql';
import { storeHardware } from './hardware';
import { notifyWatchers } from './notify';
import { postHostFeedback } from '../hosts/feedback';
import { canReadRuns, canUploadRun } from './policy';
import { MAX_INT32, checkUploadReport } from '../../../shared/report/reportSchema';

/** The report's schema and storable-value check of shared/report/reportSchema.ts (the CLI runs the same before sending). */
function checkUpload(body: unknown): Report {
  const checked = checkUploadReport(body);
  if (!checked.ok) throw badRequest(`The report is not valid: ${checked.message}.`, checked.problems);
  return checked.report;
}

/** JSON.parse as express.json does it (strict: an object or an array), with its 400 invalid-json. */
function parseJson(text: string): unknown {
  const first = /^[\x20\x09\x0a\x0d]*(.)/.exec(text)?.[1];
  try {
    if (first !== '{' && first !== '[') throw new SyntaxError('not an object or array');
    return JSON.parse(text);
  } catch {
    throw new HttpError(400, 'invalid-json', 'The request body is not valid JSON.');
  }
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

  /** A run that the caller may read, with its stored report as text (one round trip). */
  const readableRun = async (req: Request) => {
    if (!req.actor) throw unauthorized(req.authProblem ?? 'Sign in first.', req.authProblem ? 'invalid-credentials' : 'unauthorized');
    const id = idParam(String(req.params.id));
    const [found] = id === null ? [] : await q.query<RunRow & { report_text: string }>(
      `SELECT ${RUN_COLUMNS}, report::text AS report_text FROM runs WHERE id = $1`,
      { bind: [id], type: QueryTypes.SELECT },
    );
    if (!found) throw notFound('No such run.');
    const { report_text: reportText, ...run } = found;
    const { project, role } = await projectAccess(ctx, req, { id: run.project_id });
    allow(canReadRuns(role));
    return { run, reportText, project };
  };

  router.get('/api/runs/:id', async (req, res) => {
    const { run, reportText, project } = await readableRun(req);
    const { comparison, designs } = await compareRun(ctx, run, project);
    const body: Sent<Omit<RunDetail, 'report'>> = {
      run: { ...presentRun(run), project: { slug: project.slug, name: project.name }, designs: designs.map(presentDesign) },
      comparison,
    };
    const head = JSON.stringify(body);
    // The stored report goes out as stored, without parsing it into objects and back.
    res.type('application/json').send(`${head.slice(0, -1)},"report":${reportText}}`);
  });

  // The run page's downloads: the report as stored, one design's edges or schedule as CSV, its RTL as a zip.
  router.get('/api/runs/:id/download/:file', async (req, res) => {
    const file = String(req.params.file) as Download;
    if (!DOWNLOADS.includes(file)) throw notFound(`No such download; there are ${DOWNLOADS.join(', ')}.`);
    const { run, reportText, project } = await readableRun(req);
    const stem = `${fileStem(project.slug)}-${run.commit.slice(0, 12)}`;
    if (file === 'report.json') {
      res.attachment(`${stem}.pleat.json`).type('application/json').send(reportText);
      return;
    }
    const name = queryString(req, 'design');
    if (name === undefined) throw badRequest(`${file} is made for one design: add ?design=<name>.`);
    const report = JSON.parse(reportText) as Report;
    const design = report.designs.find((d) => (d.name ?? d.file) === name);
    if (!design) throw notFound('This run has no design of that name.');
    const base = `${stem}-${fileStem(name)}`;
    if (file === 'edges.csv') {
      res.attachment(`${base}-edges.csv`).type('text/csv; charset=utf-8').send(edgesCsv(design));
    } else if (file === 'schedule.csv') {
      res.attachment(`${base}-schedule.csv`).type('text/csv; charset=utf-8').send(scheduleCsv(design));
    } else {
      const zip = await rtlZip(design);
      if (!zip.ok) throw new HttpError(422, 'no-rtl', zip.reason);
      res.attachment(`${base}-rtl.zip`).type('application/zip').send(zip.zip);
    }
  });

  return router;
}

/**
 * The history page and the CI upload: the two routes under load. They are mounted before the
 * caller's look-up (app.ts) and find their caller with their project in one query (projectAccess);
 * nothing in them reads req.actor before projectAccess has run.
 */
export function runOneQueryRoutes(ctx: AppContext): Router {
  const router = Router();

  router.get('/api/projects/:slug/branches/:branch/runs', async (req, res) => {
    // The request's own parameters are checked before the query that reads the page.
    const limit = limitParam(req.query.limit, 50, 200);
    const cursor = queryString(req, 'cursor');
    const design = queryString(req, 'design');
    // A page by number (the web's ?page= in the address) skips whole pages; the cursor stays the way for scripts.
    const offsetText = queryString(req, 'offset');
    const offset = offsetText === undefined ? 0 : Number(offsetText);
    if (!Number.isInteger(offset) || offset < 0 || offset > 1_000_000 || (offsetText !== undefined && !/^\d+$/.test(offsetText))) throw badRequest('offset must be an integer from 0 to 1000000.');
    if (cursor && offset) throw badRequest('Give either cursor or offset, not both.');
    const at = cursor ? decodeCursor(cursor) : null;
    const query: HistoryQuery = { branch: req.params.branch, at, design, limit, offset };
    // The page's JSON, written by PostgreSQL in the presenters' shape (history.ts), read in the
    // same round trip as the caller and the project, and sent as it comes.
    const { project, role, along } = await projectAccess(ctx, req, { slug: req.params.slug }, {
      key: `history ${at ? 'cursor' : ''} ${design ? 'design' : ''}`,
      sql: (projectId, bind) => historyPageSql(projectId, bind, query),
    });
    allow(canReadRuns(role));
    const page = along.page as JsonText<RunPage>;
    // A page with a number PostgreSQL cannot write as JavaScript does (none of a real history's).
    sendText<RunPage>(res, page.includes(UNWRITTEN) ? await presentedPage(ctx, project.id, query) : page);
  });

  // Authorise before reading a body of up to maxReportBytes.
  const uploadAccess = async (req: Request, res: express.Response, next: express.NextFunction) => {
    // A person is told to use a token before anything about the project is said (their session is
    // looked up on its own here: people do not upload, so this is off the path under load).
    if (req.presented?.kind === 'session') await resolveCaller(ctx, req);
    if (req.actor?.kind === 'user') throw new HttpError(403, 'token-required', 'Runs are uploaded by CI with a project token (Authorization: Bearer ...).');
    // The token's two rate-limit counters are counted in the same statement, for a token that is
    // valid, not revoked and of this project (the refusals of projectAccess and canUploadRun, which
    // still decide below): one round trip for the caller, the project, the role and the limits.
    const { project, role, along } = await projectAccess(ctx, req, { slug: String(req.params.slug) }, {
      key: 'upload limits',
      sql: () => '',
      around: (access, bind) => limits.around(access, bind, 'a."caller.id"::text',
        'a."caller.id" IS NOT NULL AND a."caller.revokedAt" IS NULL AND a."caller.projectId" = a."project.id"'),
    });
    allow(canUploadRun(role));
    res.locals.project = project;
    // Counted above, or (a caller found before this route) on their own.
    if ('h0' in along) {
      if (!limits.refused(res, along)) next();
    } else {
      await limits(req, res, next);
    }
  };
  // Per CI token: a burst limit per minute and a quota per day, counted in PostgreSQL by one statement.
  const tokenKey = (req: Request) => String(req.actor?.kind === 'ci' ? req.actor.token.id : 0);
  const limits = pgLimits(ctx.db, {
    key: tokenKey,
    windows: [
      { prefix: 'upload-minute:', windowMs: 60_000, limit: ctx.config.upload.perMinute, message: `At most ${ctx.config.upload.perMinute} uploads a minute per CI token.` },
      { prefix: 'upload-day:', windowMs: 24 * 3600_000, limit: ctx.config.upload.perDay, message: `This CI token has used its quota of ${ctx.config.upload.perDay} uploads a day.` },
    ],
  });
  // The body is kept as text: it is parsed once for the checks and stored as sent (PostgreSQL
  // parses it into jsonb), not serialised again from the parsed objects.
  const bodyText = express.text({ type: 'application/json', limit: ctx.config.maxReportBytes });
  router.post('/api/projects/:slug/runs', uploadAccess, bodyText, async (req, res) => {
    const project = res.locals.project as Project;
    const text = typeof req.body === 'string' ? req.body : null;
    const report = checkUpload(text === null ? req.body : parseJson(text));
    const stored = await ingestRun(ctx, project, report, { reportText: text ?? undefined });
    // Summaries of pleat rtl --area, when the upload has any (also for a repeat: it fills gaps).
    await storeHardware(ctx, stored.id, report);
    const run = stored.row;
    // Only when the write found someone watching the branch or a git host (the flags are unset,
    // hence true, for a caller that did not read them).
    if (stored.created && stored.watched !== false) afterResponse(res, ctx.mail, () => notifyWatchers(ctx, project, stored.row, report));
    // The pull request's status and summary: after the response, so the host never delays or fails the upload.
    if (stored.created && stored.hosted !== false) afterResponse(res, ctx.mail, () => postHostFeedback(ctx, project, stored.row, report));
    res.status(stored.created ? 201 : 200);
    send<UploadResult>(res, {
      created: stored.created,
      run: presentRun(run),
      url: `${ctx.config.publicUrl}/projects/${encodeURIComponent(project.slug)}/runs/${run.id}`,
    });
  });

  return router;
}

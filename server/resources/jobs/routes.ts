// Plan and sweep jobs of a project: POST /api/projects/:slug/jobs (start, from a stored run's
// design or an uploaded design text), GET /api/projects/:slug/jobs (the latest), GET /api/jobs/:id
// (progress, attempts, result), POST /api/jobs/:id/cancel. The API process only records and
// enqueues; worker processes run the engine (server/jobs/worker.ts).
import express, { Router, type NextFunction, type Request, type Response } from 'express';
import { QueryTypes } from 'sequelize';
import type { JobAnswer, JobKind, JobList, JobObjective, JobParams, JobStarted } from '../../../shared/report/api';
import { send } from '../../http/present';
import { nameOfInvalidDesign } from '../../../shared/design/load';
import type { AppContext } from '../../context';
import type { Project } from '../../db/models';
import { projectAccess } from '../../http/access';
import { requireUser } from '../../http/auth';
import { HttpError, allow, badRequest, conflict, notFound } from '../../http/errors';
import { checker, idParam } from '../../http/validate';
import { expireSeconds } from '../../jobs/worker';
import { findJob, insertJob, jobDetail, listJobs, presentJob, requestCancel, setQueueId } from '../../jobs/store';
import { MAX_ACTIVE_JOBS_PER_PERSON, canCancelJob, canReadJobs, canStartJob } from './policy';

interface StartBody {
  kind: JobKind;
  design: { runId: number; name: string } | { text: string; file?: string };
  objective?: JobObjective;
  timeLimitSeconds?: number;
  factor?: number;
  units?: Record<string, number> | 'auto';
  factors?: number[];
}

const counts = { type: 'object', maxProperties: 64, additionalProperties: { type: 'integer', minimum: 1, maximum: 4096 } };

const checkStart = checker<StartBody>({
  type: 'object',
  required: ['kind', 'design'],
  additionalProperties: false,
  properties: {
    kind: { enum: ['plan', 'sweep'] },
    design: {
      oneOf: [
        { type: 'object', required: ['runId', 'name'], additionalProperties: false, properties: { runId: { type: 'integer', minimum: 1 }, name: { type: 'string', minLength: 1, maxLength: 255 } } },
        { type: 'object', required: ['text'], additionalProperties: false, properties: { text: { type: 'string', minLength: 1 }, file: { type: 'string', minLength: 1, maxLength: 255 } } },
      ],
    },
    objective: { enum: ['registers', 'muxes', 'latency'] },
    timeLimitSeconds: { type: 'number', minimum: 1, maximum: 600 },
    factor: { type: 'integer', minimum: 1, maximum: 4096 },
    units: { anyOf: [{ const: 'auto' }, counts] },
    factors: { type: 'array', minItems: 1, maxItems: 64, uniqueItems: true, items: { type: 'integer', minimum: 1, maximum: 4096 } },
  },
}, 'job');

/** Defaults of docs/server.md (Jobs): a plan gets 30 s like `pleat plan`; a sweep 5 s per factor, at most 600 s in all. */
function paramsOf(body: StartBody): JobParams {
  if (body.kind === 'sweep' && !body.factors) throw badRequest('A sweep needs the factors to try, e.g. "factors": [2, 3, 4].');
  if (body.kind === 'plan' && body.factors) throw badRequest('A plan takes one "factor"; "factors" is for a sweep.');
  if (body.kind === 'sweep' && body.factor !== undefined) throw badRequest('A sweep takes "factors", not "factor".');
  if (body.kind === 'plan' && body.units === 'auto') throw badRequest('"units": "auto" is for a sweep; a plan takes counts per kind.');
  const params: JobParams = {
    objective: body.objective ?? 'registers',
    timeLimitSeconds: body.timeLimitSeconds ?? (body.kind === 'plan' ? 30 : Math.min(600, 5 * (body.factors?.length ?? 1))),
  };
  if (body.factor !== undefined) params.factor = body.factor;
  if (body.units !== undefined) params.units = body.units;
  if (body.factors) params.factors = [...body.factors].sort((a, b) => a - b);
  return params;
}

export function jobRoutes(ctx: AppContext): Router {
  const router = Router();
  const q = ctx.db.sequelize;

  // Who may start is decided before a body of up to 16 MiB is read.
  const startAccess = async (req: Request, res: Response, next: NextFunction) => {
    requireUser(req);
    const { project, role } = await projectAccess(ctx, req, { slug: String(req.params.slug) });
    allow(canStartJob(role), 'Plans and sweeps are started by engineers and leads.');
    res.locals.project = project;
    next();
  };
  router.post('/api/projects/:slug/jobs', startAccess, express.json({ limit: ctx.config.maxDesignBytes + 64 * 1024 }), async (req, res) => {
    const project = res.locals.project as Project;
    const user = requireUser(req);
    const body = checkStart(req.body);
    const params = paramsOf(body);
    let source: { runId: number | null; file: string; name: string | null; text: string };
    if ('runId' in body.design) {
      const { runId, name } = body.design;
      // The design's text as the run uploaded it (designs[].source, docs/server.md), of this project only.
      const [found] = await q.query<{ file: string | null; name: string | null; source: string | null }>(
        `SELECT d->>'file' AS file, d->>'name' AS name, d->>'source' AS source
         FROM runs r, jsonb_array_elements(r.report->'designs') d
         WHERE r.id = $1 AND r.project_id = $2 AND (d->>'name' = $3 OR d->>'file' = $3) LIMIT 1`,
        { bind: [runId, project.id, name], type: QueryTypes.SELECT },
      );
      if (!found) throw notFound('No such design in a run of this project.');
      if (!found.source) {
        throw new HttpError(422, 'no-design-source', 'This run was uploaded without the text of its designs, so it cannot be planned here; upload again with a current `pleat`, or plan the file on the "Try a design" page.');
      }
      source = { runId, file: found.file ?? name, name: found.name, text: found.source };
    } else {
      if (Buffer.byteLength(body.design.text) > ctx.config.maxDesignBytes) throw new HttpError(413, 'too-large', 'The design is larger than this server takes (16 MiB).');
      const file = (body.design.file ?? 'design.fold.yaml').split(/[\\/]/).pop()!.slice(0, 255);
      const name = nameOfInvalidDesign(body.design.text);
      source = { runId: null, file, name, text: body.design.text };
    }
    const id = await insertJob(q, { projectId: project.id, kind: body.kind, runId: source.runId, file: source.file, name: source.name, text: source.text, params, userId: user.id }, { maxActivePerUser: MAX_ACTIVE_JOBS_PER_PERSON });
    if (id === null) {
      throw new HttpError(429, 'too-many-jobs', `You have ${MAX_ACTIVE_JOBS_PER_PERSON} plans or sweeps queued or running, the most one person may have at once; start this one when one of them has ended, or cancel one.`);
    }
    try {
      await setQueueId(q, id, await ctx.queue.send(id, expireSeconds(ctx.config, body.kind, params)));
    } catch (err) {
      ctx.log(`job ${id}: not queued: ${(err as Error).message}`);
      await q.query(`UPDATE jobs SET status = 'failed', error = $2, finished_at = now() WHERE id = $1`, { bind: [id, 'The job queue could not be reached; the job was not started.'] });
      throw new HttpError(503, 'queue-unavailable', 'The job queue could not be reached; try again in a moment.');
    }
    send<JobStarted>(res.status(201), { job: presentJob((await findJob(q, id))!) });
  });

  router.get('/api/projects/:slug/jobs', async (req, res) => {
    const { project, role } = await projectAccess(ctx, req, { slug: req.params.slug });
    allow(canReadJobs(role));
    const rows = await listJobs(q, project.id, 50);
    send<JobList>(res, { jobs: rows.map(presentJob) });
  });

  const jobOf = async (req: Request) => {
    requireUser(req);
    const id = idParam(String(req.params.id));
    const row = id === null ? null : await findJob(q, id);
    if (!row) throw notFound('No such job.');
    // Someone outside the project learns nothing: the same 404 as for a job that does not exist.
    const { role } = await projectAccess(ctx, req, { id: row.project_id });
    return { row, role };
  };

  router.get('/api/jobs/:id', async (req, res) => {
    const { row, role } = await jobOf(req);
    allow(canReadJobs(role));
    send<JobAnswer>(res, { job: await jobDetail(q, row) });
  });

  router.post('/api/jobs/:id/cancel', async (req, res) => {
    const { row, role } = await jobOf(req);
    allow(canCancelJob(role), 'Jobs are cancelled by engineers and leads.');
    if (!['queued', 'running'].includes(row.status)) throw conflict(`This job has already ended (${row.status}).`, 'job-finished');
    const status = await requestCancel(q, row.id);
    // A queued job leaves the queue at once; a running one stops at its worker's next check.
    if (status === 'cancelled' && row.queue_id) await ctx.queue.cancel(row.queue_id).catch((e) => ctx.log(`job ${row.id}: queue cancel: ${(e as Error).message}`));
    send<JobAnswer>(res, { job: await jobDetail(q, (await findJob(q, row.id))!) });
  });

  return router;
}

// POST /api/analyze: multipart form with the design file in field `design` (at most 16 MiB, the
// server's limit, below the format's 128 MiB) and optionally `project` (a slug whose team rules then apply).
import { basename } from 'node:path';
import { Router, type NextFunction, type Request, type Response } from 'express';
import multer from 'multer';
import type { Rules } from '../../../shared/types';
import type { AppContext } from '../../context';
import { projectAccess, type ProjectRole } from '../../http/access';
import { requireUser } from '../../http/auth';
import { createAnalyzePool } from '../../analyzePool';
import { HttpError, allow, badRequest } from '../../http/errors';
import { pgLimiter } from '../../http/limits';
import { canAnalyze } from './policy';
import { sendText } from '../../http/present';
import type { AnalyzeResult } from '../../../shared/report/api';

export function analyzeRoutes(ctx: AppContext): Router {
  const router = Router();
  const { Membership, TeamRules } = ctx.db.models;
  const upload = multer({
    storage: multer.memoryStorage(),
    limits: { fileSize: ctx.config.maxDesignBytes, files: 1, fields: 4, fieldSize: 1024, parts: 6 },
  }).single('design');

  // Who may analyse is decided before the body (up to 16 MiB) is read.
  const gate = async (req: Request, _res: Response, next: NextFunction) => {
    const user = requireUser(req);
    const roles: ProjectRole[] = user.isAdmin ? ['admin'] : (await Membership.findAll({ where: { userId: user.id } })).map((m) => m.role);
    allow(canAnalyze(roles), 'Trying designs is for engineers and leads.');
    next();
  };

  // Per person, counted in PostgreSQL: one account cannot keep every worker thread busy.
  const perUser = pgLimiter(ctx.db.sequelize, {
    prefix: 'analyze:', windowMs: 60_000, limit: ctx.config.analyze.limit,
    key: (req) => String(req.actor?.kind === 'user' ? req.actor.user.id : 0),
    message: `At most ${ctx.config.analyze.limit} analyses a minute per person.`,
  });

  router.post('/api/analyze', gate, perUser, upload, async (req, res) => {
    const file = req.file;
    if (!file) throw badRequest('Send the design file as multipart form field "design".');
    let teamRules: Rules | null = null;
    const slug = typeof req.body?.project === 'string' && req.body.project ? req.body.project : null;
    if (slug) {
      const { project, role } = await projectAccess(ctx, req, { slug });
      allow(canAnalyze([role]), 'Trying designs is for engineers and leads of the project.');
      teamRules = ((await TeamRules.findByPk(project.id))?.rules ?? null) as Rules | null;
    }
    const name = basename(file.originalname || 'design.fold.yaml').slice(0, 255);
    // Off the request thread: a design of 100,000 edges takes seconds, and health checks and other
    // people's requests go on meanwhile. A full queue is 503 (try again), a run past the time
    // limit stops its thread.
    ctx.analyzer ??= createAnalyzePool({ threads: ctx.config.analyzeThreads || undefined, nice: ctx.config.analyzeNice });
    const signal = AbortSignal.timeout(ctx.config.analyze.timeoutMs);
    try {
      sendText<AnalyzeResult>(res, await ctx.analyzer.run({ text: file.buffer.toString('utf8'), file: name, teamRules }, signal));
    } catch (err) {
      if (signal.aborted) throw new HttpError(422, 'analysis-timeout', `The analysis took longer than ${ctx.config.analyze.timeoutMs / 1000} s and was stopped; check the design with the CLI.`);
      if (err instanceof Error && /queue is at limit/i.test(err.message)) {
        res.set('Retry-After', '5');
        throw new HttpError(503, 'busy', 'Every analysis thread is busy; try again in a few seconds.');
      }
      throw err;
    }
  });

  return router;
}

// POST /api/analyze: multipart form with the design file in field `design` (at most 16 MiB, the
// format's own limit) and optionally `project` (a slug whose team rules then apply).
import { basename } from 'node:path';
import { Router, type NextFunction, type Request, type Response } from 'express';
import multer from 'multer';
import type { Rules } from '../../../shared/types';
import type { AppContext } from '../../context';
import { projectAccess, type ProjectRole } from '../../http/access';
import { requireUser } from '../../http/auth';
import { allow, badRequest } from '../../http/errors';
import { checkDesignText } from '../../engine';
import { canAnalyze } from './policy';

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

  router.post('/api/analyze', gate, upload, async (req, res) => {
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
    const result = checkDesignText(file.buffer.toString('utf8'), name, teamRules);
    res.json(result);
  });

  return router;
}

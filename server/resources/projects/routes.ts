// GET/POST /api/projects, GET/PATCH /api/projects/:slug.
import express, { Router } from 'express';
import type { AppContext } from '../../context';
import { isUniqueViolation } from '../../db/index';
import type { Project } from '../../db/models';
import { projectAccess, type ProjectRole } from '../../http/access';
import { requireUser } from '../../http/auth';
import { allow, conflict } from '../../http/errors';
import { checker } from '../../http/validate';
import { uploadReportSchema } from '../../../shared/reportSchema';
import { canCreateProject, canEditProject, canSeeProject } from './policy';

const json = express.json({ limit: '64kb' });

export const SLUG_PATTERN = '^[a-z0-9][a-z0-9-]{0,62}$';
const branchName = uploadReportSchema.properties.git.properties.branch;
const tolerance = { type: 'number', minimum: 0, maximum: 10 };

const checkCreate = checker<{ slug: string; name: string; baseBranch?: string; regressionTolerance?: number }>({
  type: 'object',
  required: ['slug', 'name'],
  additionalProperties: false,
  properties: {
    slug: { type: 'string', pattern: SLUG_PATTERN },
    name: { type: 'string', minLength: 1, maxLength: 200 },
    baseBranch: branchName,
    regressionTolerance: tolerance,
  },
});

const checkPatch = checker<{ name?: string; baseBranch?: string; regressionTolerance?: number }>({
  type: 'object',
  additionalProperties: false,
  minProperties: 1,
  properties: { name: { type: 'string', minLength: 1, maxLength: 200 }, baseBranch: branchName, regressionTolerance: tolerance },
});

export function presentProject(p: Project, role: ProjectRole | null) {
  return {
    slug: p.slug,
    name: p.name,
    baseBranch: p.baseBranch,
    regressionTolerance: p.regressionTolerance,
    role,
    createdAt: p.createdAt,
  };
}

export function projectRoutes(ctx: AppContext): Router {
  const router = Router();
  const { Project, Membership, TeamRules, RuleChange } = ctx.db.models;

  router.get('/api/projects', async (req, res) => {
    const user = requireUser(req);
    if (user.isAdmin) {
      const all = await Project.findAll({ order: [['slug', 'ASC']] });
      res.json({ projects: all.map((p) => presentProject(p, 'admin')) });
      return;
    }
    const mine = await Membership.findAll({ where: { userId: user.id }, include: [{ model: Project, as: 'project' }], order: [['project', 'slug', 'ASC']] });
    res.json({ projects: mine.map((m) => presentProject(m.project!, m.role)) });
  });

  router.post('/api/projects', json, async (req, res) => {
    const user = requireUser(req);
    allow(canCreateProject(user), 'Only an admin creates projects.');
    const body = checkCreate(req.body);
    try {
      const project = await ctx.db.sequelize.transaction(async (transaction) => {
        const p = await Project.create(body, { transaction });
        await TeamRules.create({ projectId: p.id, rules: {}, updatedBy: user.id }, { transaction });
        return p;
      });
      res.status(201).json({ project: presentProject(project, 'admin') });
    } catch (err) {
      if (isUniqueViolation(err)) throw conflict(`A project with slug '${body.slug}' exists already.`, 'slug-taken');
      throw err;
    }
  });

  router.get('/api/projects/:slug', async (req, res) => {
    const { project, role } = await projectAccess(ctx, req, { slug: req.params.slug });
    allow(canSeeProject(role));
    res.json({ project: presentProject(project, role) });
  });

  router.patch('/api/projects/:slug', json, async (req, res) => {
    const { project, role } = await projectAccess(ctx, req, { slug: req.params.slug });
    allow(canEditProject(role), 'Only a lead changes the project settings.');
    const user = requireUser(req);
    const body = checkPatch(req.body);
    await ctx.db.sequelize.transaction(async (transaction) => {
      // The tolerance decides which runs mail their watchers, so its changes are kept with the rules'.
      if (body.regressionTolerance !== undefined && body.regressionTolerance !== project.regressionTolerance) {
        await RuleChange.create({
          projectId: project.id, userId: user.id, rule: 'regression_tolerance',
          oldValue: project.regressionTolerance, newValue: body.regressionTolerance,
        }, { transaction });
      }
      await project.update(body, { transaction });
    });
    res.json({ project: presentProject(project, role) });
  });

  return router;
}

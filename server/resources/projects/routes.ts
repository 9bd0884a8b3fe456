// GET/POST /api/projects, GET/PATCH /api/projects/:slug.
import express, { Router } from 'express';
import type { AppContext } from '../../context';
import { isUniqueViolation } from '../../db/index';
import type { Project } from '../../db/models';
import { projectAccess, type ProjectRole } from '../../http/access';
import { requireUser } from '../../http/auth';
import { QueryTypes } from 'sequelize';
import { allow, badRequest, conflict } from '../../http/errors';
import { checker } from '../../http/validate';
import { send, type Sent } from '../../http/present';
import type { HostStatus, Project as ApiProject } from '../../../shared/report/api';
import { uploadReportSchema } from '../../../shared/report/reportSchema';
import { hostStatuses } from '../hosts/store';
import { canCreateProject, canDeleteProject, canEditProject, canSeeProject } from './policy';

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

const checkPatch = checker<{ name?: string; baseBranch?: string; regressionTolerance?: number; branchRunDays?: number | null; reason?: string }>({
  type: 'object',
  additionalProperties: false,
  minProperties: 1,
  properties: {
    name: { type: 'string', minLength: 1, maxLength: 200 }, baseBranch: branchName, regressionTolerance: tolerance,
    // Days runs of other branches than the base branch are kept; null keeps them for ever.
    branchRunDays: { anyOf: [{ type: 'integer', minimum: 1, maximum: 36500 }, { type: 'null' }] },
    // Why the tolerance or the retention changed: kept with the change in the rule history.
    reason: { type: 'string', maxLength: 500 },
  },
});

const checkDelete = checker<{ confirm: string }>({
  type: 'object', required: ['confirm'], additionalProperties: false, properties: { confirm: { type: 'string', maxLength: 100 } },
});

export function presentProject(p: Project, role: ProjectRole | null, host: Sent<HostStatus> | null): Sent<ApiProject> {
  return {
    slug: p.slug,
    name: p.name,
    baseBranch: p.baseBranch,
    regressionTolerance: p.regressionTolerance,
    branchRunDays: p.branchRunDays ?? null,
    // A CI token is not a role a person holds; it never reads a project through these routes.
    role: role === 'ci' ? null : role,
    createdAt: p.createdAt,
    host,
  };
}

export function projectRoutes(ctx: AppContext): Router {
  const router = Router();
  const { Project, Membership, TeamRules, RuleChange } = ctx.db.models;

  router.get('/api/projects', async (req, res) => {
    const user = requireUser(req);
    if (user.isAdmin) {
      const all = await Project.findAll({ order: [['slug', 'ASC']] });
      const hosts = await hostStatuses(ctx, all.map((p) => p.id));
      send<{ projects: ApiProject[] }>(res, { projects: all.map((p) => presentProject(p, 'admin', hosts.get(p.id) ?? null)) });
      return;
    }
    const mine = await Membership.findAll({ where: { userId: user.id }, include: [{ model: Project, as: 'project' }], order: [['project', 'slug', 'ASC']] });
    const hosts = await hostStatuses(ctx, mine.map((m) => m.project!.id));
    send<{ projects: ApiProject[] }>(res, { projects: mine.map((m) => presentProject(m.project!, m.role, hosts.get(m.project!.id) ?? null)) });
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
      res.status(201);
      send<{ project: ApiProject }>(res, { project: presentProject(project, 'admin', null) });
    } catch (err) {
      if (isUniqueViolation(err)) throw conflict(`A project with slug '${body.slug}' exists already.`, 'slug-taken');
      throw err;
    }
  });

  router.get('/api/projects/:slug', async (req, res) => {
    const { project, role } = await projectAccess(ctx, req, { slug: req.params.slug });
    allow(canSeeProject(role));
    const hosts = await hostStatuses(ctx, [project.id]);
    send<{ project: ApiProject }>(res, { project: presentProject(project, role, hosts.get(project.id) ?? null) });
  });

  router.patch('/api/projects/:slug', json, async (req, res) => {
    const { project, role } = await projectAccess(ctx, req, { slug: req.params.slug });
    allow(canEditProject(role), 'Only a lead changes the project settings.');
    const user = requireUser(req);
    const { reason: why, ...body } = checkPatch(req.body);
    const reason = why?.trim() ? why.trim() : null;
    await ctx.db.sequelize.transaction(async (transaction) => {
      // The tolerance decides which runs mail their watchers, so its changes are kept with the rules'.
      if (body.regressionTolerance !== undefined && body.regressionTolerance !== project.regressionTolerance) {
        await RuleChange.create({
          projectId: project.id, userId: user.id, rule: 'regression_tolerance',
          oldValue: project.regressionTolerance, newValue: body.regressionTolerance, reason,
        }, { transaction });
      }
      // Retention deletes runs: who shortened it, and when, is kept beside the rule changes.
      if (body.branchRunDays !== undefined && body.branchRunDays !== (project.branchRunDays ?? null)) {
        await RuleChange.create({
          projectId: project.id, userId: user.id, rule: 'branch_run_days',
          oldValue: project.branchRunDays ?? null, newValue: body.branchRunDays, reason,
        }, { transaction });
      }
      await project.update(body, { transaction });
    });
    const hosts = await hostStatuses(ctx, [project.id]);
    send<{ project: ApiProject }>(res, { project: presentProject(project, role, hosts.get(project.id) ?? null) });
  });

  // Deleting a project deletes its runs, members, tokens and rules. The body repeats the slug, so
  // a stray request (or a slip of the mouse) deletes nothing.
  router.delete('/api/projects/:slug', json, async (req, res) => {
    const user = requireUser(req);
    allow(canDeleteProject(user), 'Only an admin deletes projects.');
    const { project } = await projectAccess(ctx, req, { slug: req.params.slug });
    const { confirm } = checkDelete(req.body ?? {});
    if (confirm !== project.slug) {
      throw badRequest(`To delete the project and all its runs, send {"confirm": "${project.slug}"} (the project's slug).`);
    }
    // The runs first, in batches, so no single statement holds thousands of rows; then the rest
    // goes with the project (ON DELETE CASCADE).
    for (;;) {
      const rows = await ctx.db.sequelize.query(
        'DELETE FROM runs WHERE id IN (SELECT id FROM runs WHERE project_id = $1 LIMIT 1000) RETURNING id',
        { bind: [project.id], type: QueryTypes.SELECT },
      );
      if (rows.length < 1000) break;
    }
    await Project.destroy({ where: { id: project.id } });
    res.status(204).end();
  });

  return router;
}

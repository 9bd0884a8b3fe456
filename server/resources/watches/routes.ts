// GET /api/projects/:slug/watches (the caller's watched branches),
// PUT/DELETE /api/projects/:slug/branches/:branch/watch.
import { Router, type Request } from 'express';
import type { AppContext } from '../../context';
import { projectAccess } from '../../http/access';
import { requireUser } from '../../http/auth';
import { allow, badRequest } from '../../http/errors';
import { send } from '../../http/present';
import type { WatchList, WatchState } from '../../../shared/report/api';
import { branchNameProblem } from '../../../shared/report/reportSchema';
import { canWatch } from './policy';

export function watchRoutes(ctx: AppContext): Router {
  const router = Router();
  const { Watch } = ctx.db.models;

  async function access(req: Request) {
    const { project, role } = await projectAccess(ctx, req, { slug: String(req.params.slug) });
    allow(canWatch(role), 'Only engineers and leads watch branches.');
    return { project, user: requireUser(req) };
  }

  function branchParam(value: unknown): string {
    const b = String(value ?? '');
    const problem = branchNameProblem(b);
    if (problem) throw badRequest(`Not a branch name: ${problem}.`);
    return b;
  }

  router.get('/api/projects/:slug/watches', async (req, res) => {
    const { project, user } = await access(req);
    const rows = await Watch.findAll({ where: { projectId: project.id, userId: user.id }, order: [['branch', 'ASC']] });
    send<WatchList>(res, { branches: rows.map((w) => w.branch) });
  });

  router.put('/api/projects/:slug/branches/:branch/watch', async (req, res) => {
    const { project, user } = await access(req);
    const branch = branchParam(req.params.branch);
    const [, created] = await Watch.findOrCreate({ where: { projectId: project.id, userId: user.id, branch }, defaults: { projectId: project.id, userId: user.id, branch } });
    send<WatchState>(res.status(created ? 201 : 200), { branch, watching: true });
  });

  router.delete('/api/projects/:slug/branches/:branch/watch', async (req, res) => {
    const { project, user } = await access(req);
    const branch = branchParam(req.params.branch);
    await Watch.destroy({ where: { projectId: project.id, userId: user.id, branch } });
    send<WatchState>(res, { branch, watching: false });
  });

  return router;
}

// GET /api/projects/:slug/branches: every branch with its latest run and a short trend.
import { Router } from 'express';
import { QueryTypes } from 'sequelize';
import type { Status } from '../../../shared/types';
import type { AppContext } from '../../context';
import { projectAccess } from '../../http/access';
import { allow } from '../../http/errors';
import { send } from '../../http/present';
import type { BranchList } from '../../../shared/report/api';
import { canListBranches } from './policy';

/** How many recent runs the trend of each branch shows. */
export const TREND_LENGTH = 12;

interface Row {
  name: string;
  last_run_at: Date;
  run_id: number | null;
  commit: string | null;
  verdict: Status | null;
  watching: boolean;
  trend: { runId: number; commit: string; verdict: Status; utilization: number | null; registerMinimum: number | null; violations: number; createdAt: string }[] | null;
}

export function branchRoutes(ctx: AppContext): Router {
  const router = Router();
  router.get('/api/projects/:slug/branches', async (req, res) => {
    const { project, role } = await projectAccess(ctx, req, { slug: req.params.slug });
    allow(canListBranches(role));
    const userId = req.actor?.kind === 'user' ? req.actor.user.id : 0;
    const rows = await ctx.db.sequelize.query<Row>(
      `SELECT b.name, b.last_run_at, r.id AS run_id, r.commit, r.verdict,
              EXISTS (SELECT 1 FROM watches w WHERE w.user_id = $2 AND w.project_id = b.project_id AND w.branch = b.name) AS watching,
              t.trend
       FROM branches b
       LEFT JOIN runs r ON r.id = b.last_run_id
       LEFT JOIN LATERAL (
         SELECT json_agg(json_build_object('runId', x.id, 'commit', x.commit, 'verdict', x.verdict, 'utilization', x.utilization,
                         'registerMinimum', x.register_minimum, 'violations', x.violation_count, 'createdAt', x.created_at)
                         ORDER BY x.created_at, x.id) AS trend
         FROM (SELECT id, commit, verdict, utilization, register_minimum, violation_count, created_at FROM runs
               WHERE project_id = b.project_id AND branch = b.name ORDER BY created_at DESC, id DESC LIMIT ${TREND_LENGTH}) x
       ) t ON true
       WHERE b.project_id = $1
       ORDER BY (b.name = $3) DESC, b.last_run_at DESC, b.name`,
      { bind: [project.id, userId, project.baseBranch], type: QueryTypes.SELECT },
    );
    send<BranchList>(res, {
      baseBranch: project.baseBranch,
      branches: rows.map((r) => ({
        name: r.name,
        isBase: r.name === project.baseBranch,
        watching: r.watching,
        lastRunAt: r.last_run_at,
        // The join finds the run of last_run_id, so its commit and verdict are there whenever its id is.
        latest: r.run_id === null || r.commit === null || r.verdict === null ? null : { id: r.run_id, commit: r.commit, verdict: r.verdict },
        trend: (r.trend ?? []).map((t) => ({ ...t, createdAt: new Date(t.createdAt) })),
      })),
    });
  });
  return router;
}

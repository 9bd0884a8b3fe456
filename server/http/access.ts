// The caller's role in a project, found once per request. Policies (server/resources/*/policy.ts)
// decide with it; this file only says who the caller is in the project.
import type { Request } from 'express';
import { QueryTypes } from 'sequelize';
import type { AppContext } from '../context';
import type { Project, Role } from '../db/models';
import { callerSql, settleCaller } from './auth';
import { HttpError, notFound, unauthorized } from './errors';

/** 'admin' is global; 'ci' is the project's own CI token; null never reaches a policy. */
export type ProjectRole = 'admin' | Role | 'ci';

const RANK: Record<Role, number> = { viewer: 1, engineer: 2, lead: 3 };

/** True for an admin, or a member whose role is `min` or higher. CI tokens are not members. */
export function isAtLeast(role: ProjectRole, min: Role): boolean {
  if (role === 'admin') return true;
  if (role === 'ci') return false;
  return RANK[role] >= RANK[min];
}

/**
 * Loads the project and the caller's role in it. Anonymous callers get 401; people who are not
 * members get 404 (a project's existence is not disclosed); a CI token of another project gets 403.
 *
 * One round trip. On routes mounted before lookUpCaller (app.ts, "routes that find their caller
 * with their project") the caller is not known yet: the same query then also checks the session or
 * CI token (callerSql, the very check lookUpCaller makes), so such a request costs one query for
 * its caller, project and role together, and req.actor is set afterwards as on every other route.
 */
export async function projectAccess(ctx: AppContext, req: Request, where: { slug: string } | { id: number }): Promise<{ project: Project; role: ProjectRole }> {
  const { Project } = ctx.db.models;
  const key = 'slug' in where ? where.slug : where.id;
  const match = 'slug' in where ? 'p.slug = $1' : 'p.id = $1';
  let row: Record<string, unknown> | undefined;
  if (req.actor === undefined && req.presented) {
    const c = callerSql(ctx, req.presented, 2);
    // The membership is joined only for a person; a CI token's project is compared below.
    const member = req.presented.kind === 'session' ? 'm.project_id = p.id AND m.user_id = caller."caller.id"' : 'false';
    [row] = await ctx.db.sequelize.query<Record<string, unknown>>(
      `SELECT caller.*, p.*, m.role AS member_role FROM (SELECT 1) one
       LEFT JOIN ${c.from} ON true
       LEFT JOIN projects p ON ${match}
       LEFT JOIN memberships m ON ${member}`,
      { bind: [key, ...c.bind], type: QueryTypes.SELECT },
    );
    settleCaller(ctx, req, row);
  }
  const actor = req.actor;
  if (!actor) throw unauthorized(req.authProblem ?? 'Sign in first.', req.authProblem ? 'invalid-credentials' : 'unauthorized');
  if (!row) {
    const userId = actor.kind === 'user' ? actor.user.id : 0;
    [row] = await ctx.db.sequelize.query<Record<string, unknown>>(
      `SELECT p.*, m.role AS member_role FROM projects p
       LEFT JOIN memberships m ON m.project_id = p.id AND m.user_id = $2
       WHERE ${match}`,
      { bind: [key, userId], type: QueryTypes.SELECT },
    );
  }
  const project = row && row.id != null ? Project.build({
    id: row.id as number, slug: row.slug as string, name: row.name as string, baseBranch: row.base_branch as string,
    regressionTolerance: row.regression_tolerance as number, branchRunDays: (row.branch_run_days as number | null) ?? null,
    createdAt: row.created_at as Date, updatedAt: row.updated_at as Date,
  }, { isNewRecord: false }) : null;
  if (actor.kind === 'ci') {
    if (!project || project.id !== actor.token.projectId) {
      throw new HttpError(403, 'wrong-project', 'This CI token belongs to another project.');
    }
    return { project, role: 'ci' };
  }
  if (!project) throw notFound('No such project.');
  if (actor.user.isAdmin) return { project, role: 'admin' };
  const role = row!.member_role as Role | null;
  if (!role) throw notFound('No such project.');
  return { project, role };
}

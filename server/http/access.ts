// The caller's role in a project, found once per request. Policies (server/resources/*/policy.ts)
// decide with it; this file only says who the caller is in the project.
import type { Request } from 'express';
import { QueryTypes } from 'sequelize';
import type { AppContext } from '../context';
import type { Project, Role } from '../db/models';
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
 */
export async function projectAccess(ctx: AppContext, req: Request, where: { slug: string } | { id: number }): Promise<{ project: Project; role: ProjectRole }> {
  const actor = req.actor;
  if (!actor) throw unauthorized(req.authProblem ?? 'Sign in first.', req.authProblem ? 'invalid-credentials' : 'unauthorized');
  const { Project } = ctx.db.models;
  // One round trip: the project and the caller's membership role in it.
  const userId = actor.kind === 'user' ? actor.user.id : 0;
  const rows = await ctx.db.sequelize.query<Record<string, unknown>>(
    `SELECT p.*, m.role AS member_role FROM projects p
     LEFT JOIN memberships m ON m.project_id = p.id AND m.user_id = $2
     WHERE ${'slug' in where ? 'p.slug' : 'p.id'} = $1`,
    { bind: ['slug' in where ? where.slug : where.id, userId], type: QueryTypes.SELECT },
  );
  const row = rows[0];
  const project = row ? Project.build({
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

// The caller's role in a project, found once per request. Policies (server/resources/*/policy.ts)
// decide with it; this file only says who the caller is in the project.
import type { Request } from 'express';
import { QueryTypes } from 'sequelize';
import type { AppContext } from '../context';
import type { Project, Role } from '../db/models';
import { callerSql, columnsOf, modelFrom, settleCaller } from './auth';
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
 * Rows to read in the same round trip as the project: a query given the SQL of the project's id
 * (it adds its own bind parameters to `bind`), and its order as SQL over the query's columns as `r.*`.
 */
export type AlongWith = (projectId: string, bind: unknown[]) => { sql: string; orderBy: string };

/**
 * Loads the project and the caller's role in it. Anonymous callers get 401; people who are not
 * members get 404 (a project's existence is not disclosed); a CI token of another project gets 403.
 *
 * One round trip. On routes mounted before lookUpCaller (app.ts, "routes that find their caller
 * with their project") the caller is not known yet: the same query then also checks the session or
 * CI token (callerSql, the very check lookUpCaller makes), so such a request costs one query for
 * its caller, project and role together, and req.actor is set afterwards as on every other route.
 * `along` (the history page) adds the route's own rows to that query: they are read only for a
 * person who is a member or an admin, and the route's policy still decides before any is sent.
 */
export async function projectAccess(ctx: AppContext, req: Request, where: { slug: string } | { id: number }, along?: AlongWith): Promise<{ project: Project; role: ProjectRole; rows: Record<string, unknown>[] }> {
  const { Project } = ctx.db.models;
  const key = 'slug' in where ? where.slug : where.id;
  const match = 'slug' in where ? 'p.slug = $1' : 'p.id = $1';
  const projectColumns = columnsOf(Project, 'p', 'project');
  let rows: Record<string, unknown>[] | null = null;
  let alongJoined = false;
  if (req.actor === undefined && req.presented) {
    const c = callerSql(ctx, req.presented, 2);
    const person = req.presented.kind === 'session';
    // The membership is joined only for a person; a CI token's project is compared below.
    const access = `SELECT caller.*, ${projectColumns}, m.role AS member_role FROM (SELECT 1) one
       LEFT JOIN ${c.from} ON true
       LEFT JOIN projects p ON ${match}
       LEFT JOIN memberships m ON ${person ? 'm.project_id = p.id AND m.user_id = caller."caller.id"' : 'false'}`;
    const bind = [key, ...c.bind];
    const more = along?.('a."project.id"', bind);
    const sql = more
      ? `SELECT a.*, r.* FROM (${access}) a
         LEFT JOIN LATERAL (${more.sql}) r
           ON ${person ? 'a."project.id" IS NOT NULL AND (a.member_role IS NOT NULL OR a."caller.isAdmin")' : 'false'}
         ORDER BY ${more.orderBy}`
      : access;
    rows = await ctx.db.sequelize.query<Record<string, unknown>>(sql, { bind, type: QueryTypes.SELECT });
    alongJoined = !!along;
    settleCaller(ctx, req, rows[0]);
  }
  const actor = req.actor;
  if (!actor) throw unauthorized(req.authProblem ?? 'Sign in first.', req.authProblem ? 'invalid-credentials' : 'unauthorized');
  if (!rows) {
    const userId = actor.kind === 'user' ? actor.user.id : 0;
    rows = await ctx.db.sequelize.query<Record<string, unknown>>(
      `SELECT ${projectColumns}, m.role AS member_role FROM projects p
       LEFT JOIN memberships m ON m.project_id = p.id AND m.user_id = $2
       WHERE ${match}`,
      { bind: [key, userId], type: QueryTypes.SELECT },
    );
  }
  const row = rows[0];
  const project = modelFrom<Project>(Project, row, 'project');
  const role = accessRole(actor, project, (row?.member_role as Role | null | undefined) ?? null);
  if (!along) return { project: project!, role, rows: [] };
  // The route's rows: from the same query (the page's columns beside the access columns; a row
  // without an id is the access row alone), or, when the caller was looked up before, on their own.
  let page = rows.filter((r) => r.id !== null && r.id !== undefined);
  if (!alongJoined) {
    const bind: unknown[] = [project!.id];
    const more = along('$1', bind);
    page = await ctx.db.sequelize.query<Record<string, unknown>>(`SELECT r.* FROM (${more.sql}) r ORDER BY ${more.orderBy}`, { bind, type: QueryTypes.SELECT });
  }
  return { project: project!, role, rows: page };
}

/** The role of the caller in a project that was found (or null): the refusals of projectAccess. */
function accessRole(actor: NonNullable<Request['actor']>, project: Project | null, memberRole: Role | null): ProjectRole {
  if (actor.kind === 'ci') {
    if (!project || project.id !== actor.token.projectId) {
      throw new HttpError(403, 'wrong-project', 'This CI token belongs to another project.');
    }
    return 'ci';
  }
  if (!project) throw notFound('No such project.');
  if (actor.user.isAdmin) return 'admin';
  if (!memberRole) throw notFound('No such project.');
  return memberRole;
}

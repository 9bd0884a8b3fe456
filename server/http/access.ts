// The caller's role in a project, found once per request. Policies (server/resources/*/policy.ts)
// decide with it; this file only says who the caller is in the project.
import type { Request } from 'express';
import type { AppContext } from '../context';
import { rawQuery } from '../db/raw';
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
 * What to read in the same round trip as the project: the SQL of one row (the history page: one
 * column `page`, its JSON text), given the SQL of the project's id; it adds its own bind
 * parameters to `bind`. The id is NULL for a caller who may not see the project's rows.
 */
export interface AlongWith {
  /** Names the shape of the SQL `sql` makes (the same key, the same text for any values). */
  key: string;
  sql: (projectId: string, bind: unknown[]) => string;
  /**
   * Instead of `sql` (only where the caller is found in the same statement): the whole statement
   * around the access query (the upload: its rate-limit counters, PgLimits.around), whose one
   * row has the access columns and its own beside them.
   */
  around?: (access: string, bind: unknown[]) => string;
}

// The statement texts of projectAccess by shape (caller kind, project key, along's key): made
// once, so each request neither rebuilds nor rehashes a long text to find its prepared statement.
const statements = new Map<string, string>();
function statement(key: string, make: () => string): string {
  let text = statements.get(key);
  if (text === undefined) statements.set(key, (text = make()));
  return text;
}

/**
 * Loads the project and the caller's role in it. Anonymous callers get 401; people who are not
 * members get 404 (a project's existence is not disclosed); a CI token of another project gets 403.
 *
 * One round trip, a statement prepared once per connection (server/db/raw.ts). On routes mounted
 * before lookUpCaller (app.ts, "routes that find their caller with their project") the caller is
 * not known yet: the same query then also checks the session or CI token (callerSql, the very
 * check lookUpCaller makes), so such a request costs one query for its caller, project and role
 * together, and req.actor is set afterwards as on every other route.
 * `along` (the history page) adds the route's own row to that query: its rows are read only for a
 * person who is a member or an admin (for anyone else the project's id it is given is NULL), and
 * the route's policy still decides before any of it is sent.
 */
export async function projectAccess(ctx: AppContext, req: Request, where: { slug: string } | { id: number }, along?: AlongWith): Promise<{ project: Project; role: ProjectRole; along: Record<string, unknown> }> {
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
    const visible = person ? 'CASE WHEN a."member_role" IS NOT NULL OR a."caller.isAdmin" THEN a."project.id" END' : 'NULL::int';
    let text = access;
    if (along?.around) text = along.around(access, bind);
    else if (along) text = `SELECT a.*, r.* FROM (${access}) a CROSS JOIN LATERAL (${along.sql(visible, bind)}) r`;
    const sql = statement(`${req.presented.kind} ${match} ${along?.key ?? ''}`, () => text);
    rows = await rawQuery<Record<string, unknown>>(ctx.db, sql, bind);
    alongJoined = !!along;
    settleCaller(ctx, req, rows[0]);
  }
  const actor = req.actor;
  if (!actor) throw unauthorized(req.authProblem ?? 'Sign in first.', req.authProblem ? 'invalid-credentials' : 'unauthorized');
  if (!rows) {
    const userId = actor.kind === 'user' ? actor.user.id : 0;
    rows = await rawQuery<Record<string, unknown>>(ctx.db,
      `SELECT ${projectColumns}, m.role AS member_role FROM projects p
       LEFT JOIN memberships m ON m.project_id = p.id AND m.user_id = $2
       WHERE ${match}`,
      [key, userId],
    );
  }
  const row = rows[0];
  const project = modelFrom<Project>(Project, row, 'project');
  const role = accessRole(actor, project, (row?.member_role as Role | null | undefined) ?? null);
  if (!along) return { project: project!, role, along: {} };
  // The route's row: from the same query, or, when the caller was looked up before, on its own
  // (the caller's role was settled just above, so the project's id is given as it is).
  if (alongJoined) return { project: project!, role, along: row! };
  // (An `around` statement is not made then: the caller of `along` sees no row of its own.)
  if (along.around) return { project: project!, role, along: {} };
  const bind: unknown[] = [project!.id];
  const [own] = await rawQuery<Record<string, unknown>>(ctx.db, along.sql('$1::int', bind), bind);
  return { project: project!, role, along: own! };
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

// Test data: people of every role, projects, CI tokens and reports of the CLI's JSON shape.
import { randomBytes } from 'node:crypto';
import bcrypt from 'bcryptjs';
import type { DesignReport, Report, Status } from '../../shared/types';
import type { AppContext } from '../context';
import type { Invitation, Project, Role, User } from '../db/models';
import { insertJob } from '../jobs/store';
import { CI_TOKEN_PREFIX, SESSION_COOKIE, hashSecret, newSecret, signSession } from '../http/auth';

let seq = 0;
const next = () => `${process.pid}-${++seq}`;

export const PASSWORD = 'correct horse battery';
// Hashing costs time even at 4 rounds: hash the shared test password once.
const PASSWORD_HASH = bcrypt.hashSync(PASSWORD, 4);

export async function makeUser(ctx: AppContext, o: { email?: string; name?: string; isAdmin?: boolean; deactivated?: boolean } = {}): Promise<User> {
  const n = next();
  return ctx.db.models.User.create({
    email: o.email ?? `user-${n}@example.test`,
    name: o.name ?? `User ${n}`,
    passwordHash: PASSWORD_HASH,
    isAdmin: o.isAdmin ?? false,
    deactivatedAt: o.deactivated ? new Date() : null,
  });
}

export async function makeProject(ctx: AppContext, o: { slug?: string; name?: string; baseBranch?: string; regressionTolerance?: number } = {}): Promise<Project> {
  const n = next();
  const project = await ctx.db.models.Project.create({
    slug: o.slug ?? `proj-${n}`, name: o.name ?? `Project ${n}`, baseBranch: o.baseBranch ?? 'main',
    regressionTolerance: o.regressionTolerance ?? 0.05,
  });
  await ctx.db.models.TeamRules.create({ projectId: project.id, rules: {}, updatedBy: null });
  return project;
}

export async function addMember(ctx: AppContext, project: Project, user: User, role: Role): Promise<void> {
  await ctx.db.models.Membership.create({ projectId: project.id, userId: user.id, role });
}

export async function makeMember(ctx: AppContext, project: Project, role: Role): Promise<User> {
  const user = await makeUser(ctx, { name: `${role} ${next()}` });
  await addMember(ctx, project, user, role);
  return user;
}

/** A CI token of the project; returns the secret a CI job would hold. */
export async function makeCiToken(ctx: AppContext, project: Project, o: { revoked?: boolean } = {}): Promise<{ id: number; secret: string }> {
  const secret = newSecret(CI_TOKEN_PREFIX);
  const t = await ctx.db.models.CiToken.create({
    projectId: project.id, name: `ci ${next()}`, tokenHash: hashSecret(secret), prefix: secret.slice(0, 15), createdBy: null,
    revokedAt: o.revoked ? new Date() : null,
  });
  return { id: t.id, secret };
}

export async function makeInvitation(ctx: AppContext, project: Project | null, o: { email?: string; role?: Role; expired?: boolean } = {}): Promise<{ invitation: Invitation; secret: string }> {
  const secret = newSecret();
  const invitation = await ctx.db.models.Invitation.create({
    email: o.email ?? `invitee-${next()}@example.test`, projectId: project?.id ?? null, role: project ? (o.role ?? 'viewer') : null,
    tokenHash: hashSecret(secret), invitedBy: null,
    expiresAt: new Date(Date.now() + (o.expired ? -1 : 1) * 24 * 3600 * 1000),
  });
  return { invitation, secret };
}

/** The Cookie header of a signed-in session of this user. */
export function cookieFor(ctx: AppContext, user: User): string {
  return `${SESSION_COOKIE}=${signSession(ctx, user.id, user.sessionEpoch ?? 0).token}`;
}

/** Everyone the access tests need: one person per role in `project`, and a lead of another project. */
export interface World {
  project: Project;
  otherProject: Project;
  admin: User;
  lead: User;
  engineer: User;
  viewer: User;
  /** Not a member of `project`; lead of `otherProject`, so a role elsewhere must not leak. */
  outsider: User;
  ciOwn: string;
  ciOther: string;
}

export async function makeWorld(ctx: AppContext): Promise<World> {
  const project = await makeProject(ctx);
  const otherProject = await makeProject(ctx);
  const admin = await makeUser(ctx, { isAdmin: true, name: 'Admin' });
  const lead = await makeMember(ctx, project, 'lead');
  const engineer = await makeMember(ctx, project, 'engineer');
  const viewer = await makeMember(ctx, project, 'viewer');
  const outsider = await makeMember(ctx, otherProject, 'lead');
  const ciOwn = (await makeCiToken(ctx, project)).secret;
  const ciOther = (await makeCiToken(ctx, otherProject)).secret;
  return { project, otherProject, admin, lead, engineer, viewer, outsider, ciOwn, ciOther };
}

/** A design entry of the report (docs/cli.md shape) with the numbers the server files. */
export function designEntry(name: string, o: { status?: Status; utilization?: number | null; registers?: number | null; violations?: number; negativeEdges?: number } = {}): DesignReport {
  const status = o.status ?? 'pass';
  const analysed = status !== 'error';
  const negatives = o.negativeEdges ?? 0;
  return {
    file: `hw/${name}.fold.yaml`,
    name,
    status,
    diagnostics: analysed ? [] : [{ severity: 'error', code: 'yaml-syntax', message: 'broken', line: 3, column: 1 }],
    factor: analysed ? 4 : undefined,
    edges: analysed
      ? [{ from: 'a', to: 'b', delays: 1, foldedDelay: 3, retimedDelays: 1, retimedFoldedDelay: 3 },
         ...Array.from({ length: negatives }, () => ({ from: 'b', to: 'c', delays: 0, foldedDelay: -1, retimedDelays: 1, retimedFoldedDelay: 3 }))]
      : undefined,
    retiming: analysed ? { needed: negatives > 0, feasible: true, values: {}, latencyAdded: 0, conflict: null } : undefined,
    utilization: analysed ? { overall: o.utilization ?? 0.5, units: {} } : undefined,
    registers: analysed && o.registers !== null ? { perEdge: 8, delayLines: 6, minimum: o.registers ?? 4 } : null,
    violations: Array.from({ length: o.violations ?? (status === 'fail' ? 1 : 0) }, () => ({
      rule: 'min_utilization' as const, source: 'team' as const, limit: 0.75, actual: 0.5, message: 'below the floor',
    })),
  } as DesignReport;
}

export function makeReport(o: { branch?: string; commit?: string; baseBranch?: string | null; baseCommit?: string | null; designs?: DesignReport[] } = {}): Report {
  const designs = o.designs ?? [designEntry('notch')];
  const rank = { pass: 0, fail: 1, error: 2 } as const;
  const verdict = designs.reduce<Status>((w, d) => (rank[d.status] > rank[w] ? d.status : w), 'pass');
  return {
    format: 'pleat-report/1',
    tool: { name: 'pleat', version: '0.1.0' },
    git: { branch: o.branch ?? 'main', commit: o.commit ?? randomCommit(), baseBranch: o.baseBranch ?? null, baseCommit: o.baseCommit ?? null },
    verdict,
    rules: {},
    designs,
  };
}

/** A queued plan job of the project (in our tables only: no worker will take it). */
export async function makeJob(ctx: AppContext, project: Project, user: User, o: { text?: string; kind?: 'plan' | 'sweep' } = {}): Promise<number> {
  const id = await insertJob(ctx.db.sequelize, {
    projectId: project.id, kind: o.kind ?? 'plan', runId: null, file: 'made.fold.yaml', name: 'made',
    text: o.text ?? 'format: pleat/1\nname: made\n', params: { objective: 'registers', timeLimitSeconds: 1 }, userId: user.id,
  });
  return id!;
}

export function randomCommit(): string {
  return randomBytes(20).toString('hex');
}

// Members of a project and invitations:
//   GET/POST /api/projects/:slug/members, PATCH/DELETE /api/projects/:slug/members/:userId,
//   GET /api/projects/:slug/invitations, DELETE /api/projects/:slug/invitations/:id,
//   GET /api/invitations/:token, POST /api/invitations/:token/accept (public, with the link's secret).
import bcrypt from 'bcryptjs';
import express, { Router } from 'express';
import { Op, QueryTypes } from 'sequelize';
import type { AppContext } from '../../context';
import type { Membership, Project, Role, User as UserRow } from '../../db/models';
import { projectAccess } from '../../http/access';
import { hashSecret, requireUser, setSessionCookie } from '../../http/auth';
import { HttpError, allow, badRequest, conflict, gone, notFound } from '../../http/errors';
import { normalEmail, publicUser, send, type Sent } from '../../http/present';
import type { Invitation as ApiInvitation, InvitationAccepted, Member } from '../../../shared/report/api';
import { checker, idParam } from '../../http/validate';
import { invite, presentInvitation } from './invitations';
import { canAcceptInvitation, canManageMembers } from './policy';

const json = express.json({ limit: '16kb' });
const role = { enum: ['lead', 'engineer', 'viewer'] };
export const emailSchema = { type: 'string', minLength: 3, maxLength: 320, pattern: '^[^\\s@]+@[^\\s@]+$' };
/** At least 8 characters, and not only spaces (which a form can submit by accident). */
export const passwordSchema = { type: 'string', minLength: 8, maxLength: 200, pattern: '\\S', 'x-message': 'must contain something other than spaces' };

const checkAdd = checker<{ email: string; role: Role }>({
  type: 'object', required: ['email', 'role'], additionalProperties: false, properties: { email: emailSchema, role },
});
const checkRole = checker<{ role: Role }>({
  type: 'object', required: ['role'], additionalProperties: false, properties: { role },
});
const checkAccept = checker<{ name?: string; password?: string }>({
  type: 'object', additionalProperties: false,
  properties: { name: { type: 'string', minLength: 1, maxLength: 200 }, password: passwordSchema },
});

function presentMember(m: Membership): Sent<Member> {
  return { user: publicUser(m.user!), role: m.role, since: m.createdAt };
}

export function memberRoutes(ctx: AppContext): Router {
  const router = Router();
  const { Membership, User, Invitation, Project, Watch } = ctx.db.models;

  async function managed(req: express.Request) {
    const { project, role: callerRole } = await projectAccess(ctx, req, { slug: String(req.params.slug) });
    allow(canManageMembers(callerRole), 'Only a lead manages members.');
    return { project, user: requireUser(req) };
  }

  /**
   * Re-roles (newRole) or removes (null) a member. A project keeps at least one lead, so someone
   * can always manage it without an admin. Every change of a project's roles first locks the
   * project's row (FOR NO KEY UPDATE: uploads, which only take a key-share lock through the
   * foreign key, are not held up), so two changes of one project run one after the other and the
   * second counts the leads the first left. A check outside the lock would let two leads demote
   * each other at once.
   */
  async function changeMember(project: Project, userIdParam: string | undefined, newRole: Role | null): Promise<Membership> {
    const userId = idParam(userIdParam);
    if (userId === null) throw notFound('No such member in this project.');
    return ctx.db.sequelize.transaction(async (transaction) => {
      await ctx.db.sequelize.query('SELECT 1 FROM projects WHERE id = $1 FOR NO KEY UPDATE', { bind: [project.id], transaction });
      const m = await Membership.findOne({ where: { projectId: project.id, userId }, include: [{ model: User, as: 'user' }], transaction });
      if (!m) throw notFound('No such member in this project.');
      if (m.role === 'lead' && newRole !== 'lead') {
        const leads = await Membership.count({ where: { projectId: project.id, role: 'lead' }, transaction });
        if (leads <= 1) throw conflict('This is the project\'s last lead; make someone else lead first.', 'last-lead');
      }
      if (newRole) {
        await m.update({ role: newRole }, { transaction });
      } else {
        await Watch.destroy({ where: { projectId: project.id, userId: m.userId }, transaction });
        await m.destroy({ transaction });
      }
      return m;
    });
  }

  router.get('/api/projects/:slug/members', async (req, res) => {
    const { project } = await managed(req);
    const rows = await Membership.findAll({ where: { projectId: project.id }, include: [{ model: User, as: 'user' }], order: [['user', 'name', 'ASC']] });
    send<{ members: Member[] }>(res, { members: rows.map(presentMember) });
  });

  router.post('/api/projects/:slug/members', json, async (req, res) => {
    const { project, user: caller } = await managed(req);
    const body = checkAdd(req.body);
    const email = normalEmail(body.email);
    const existing = await User.findOne({ where: { email } });
    if (!existing) {
      // Someone without an account: invited by e-mail, added when they accept.
      const inv = await invite(ctx, res, { email, project, role: body.role, inviter: caller });
      inv.project = project;
      send<{ invitation: ApiInvitation }>(res.status(202), { invitation: presentInvitation(inv) });
      return;
    }
    if (existing.deactivatedAt) throw conflict('This account is deactivated; an admin can reactivate it.', 'user-deactivated');
    const [m, created] = await Membership.findOrCreate({ where: { projectId: project.id, userId: existing.id }, defaults: { projectId: project.id, userId: existing.id, role: body.role } });
    if (!created) throw conflict(`${email} is a member already (${m.role}); change the role instead.`, 'already-member');
    m.user = existing;
    send<{ member: Member }>(res.status(201), { member: presentMember(m) });
  });

  router.patch('/api/projects/:slug/members/:userId', json, async (req, res) => {
    const { project } = await managed(req);
    const { role: newRole } = checkRole(req.body);
    const m = await changeMember(project, req.params.userId, newRole);
    send<{ member: Member }>(res, { member: presentMember(m) });
  });

  router.delete('/api/projects/:slug/members/:userId', async (req, res) => {
    const { project } = await managed(req);
    await changeMember(project, req.params.userId, null);
    res.status(204).end();
  });

  router.get('/api/projects/:slug/invitations', async (req, res) => {
    const { project } = await managed(req);
    const rows = await Invitation.findAll({
      where: { projectId: project.id, acceptedAt: { [Op.is]: null }, expiresAt: { [Op.gt]: new Date() } },
      include: [{ model: Project, as: 'project' }], order: [['id', 'DESC']],
    });
    send<{ invitations: ApiInvitation[] }>(res, { invitations: rows.map(presentInvitation) });
  });

  router.delete('/api/projects/:slug/invitations/:id', async (req, res) => {
    const { project } = await managed(req);
    const id = idParam(req.params.id);
    const n = id === null ? 0 : await Invitation.destroy({ where: { id, projectId: project.id, acceptedAt: { [Op.is]: null } } });
    if (!n) throw notFound('No such pending invitation in this project.');
    res.status(204).end();
  });

  async function byToken(token: string | undefined) {
    const inv = token ? await Invitation.findOne({ where: { tokenHash: hashSecret(token) }, include: [{ model: Project, as: 'project' }] }) : null;
    if (!inv) throw notFound('No such invitation; ask for a new one.');
    const state = canAcceptInvitation(inv);
    if (state === 'used') throw gone('This invitation has been used already; sign in instead.', 'invitation-used');
    if (state === 'expired') throw gone('This invitation has expired; ask for a new one.', 'invitation-expired');
    return inv;
  }

  router.get('/api/invitations/:token', async (req, res) => {
    const inv = await byToken(req.params.token);
    const existing = await User.count({ where: { email: inv.email } });
    send<{ invitation: ApiInvitation; accountExists: boolean }>(res, { invitation: presentInvitation(inv), accountExists: existing > 0 });
  });

  router.post('/api/invitations/:token/accept', json, async (req, res) => {
    const inv = await byToken(req.params.token);
    const body = checkAccept(req.body ?? {});
    const before = await User.findOne({ where: { email: inv.email } });
    if (before?.deactivatedAt) throw new HttpError(403, 'user-deactivated', 'This account is deactivated.');
    if (!before && (!body.name || !body.password)) throw badRequest('Choose a name and a password (at least 8 characters).');
    const hash = before ? null : await bcrypt.hash(body.password!, ctx.config.bcryptRounds);
    const q = ctx.db.sequelize;
    const { user, created, role } = await q.transaction(async (transaction) => {
      // Claim the invitation first: of two concurrent accepts of one link only one gets here.
      const [claimed] = await Invitation.update({ acceptedAt: new Date() }, {
        where: { id: inv.id, acceptedAt: { [Op.is]: null }, expiresAt: { [Op.gt]: new Date() } }, transaction,
      });
      if (!claimed) throw gone('This invitation has been used already; sign in instead.', 'invitation-used');
      // Two links for one new address accepted at once: the unique e-mail decides which makes the
      // account (ON CONFLICT waits for the other insert to commit); the other joins that account.
      let made: UserRow | undefined;
      if (hash) {
        [made] = await q.query<UserRow>(
          `INSERT INTO users (email, name, password_hash) VALUES ($1, $2, $3) ON CONFLICT (email) DO NOTHING RETURNING *`,
          { bind: [inv.email, body.name!, hash], model: User, mapToModel: true, transaction },
        );
      }
      const u = made ?? await User.findOne({ where: { email: inv.email }, transaction });
      if (!u) throw gone('The account of this invitation is gone; ask for a new one.', 'invitation-used');
      if (u.deactivatedAt) throw new HttpError(403, 'user-deactivated', 'This account is deactivated.');
      if (inv.isAdmin && !u.isAdmin) await u.update({ isAdmin: true }, { transaction });
      let finalRole: Role | null = inv.role;
      if (inv.projectId && inv.role) {
        // An invitation adds a member or raises a role, never lowers one: an old link must not
        // demote someone made lead since (possibly the project's last lead).
        const [row] = await q.query<{ role: Role }>(
          `INSERT INTO memberships (project_id, user_id, role) VALUES ($1, $2, $3)
           ON CONFLICT (project_id, user_id) DO UPDATE SET role = EXCLUDED.role, updated_at = now()
             WHERE array_position(ARRAY['viewer', 'engineer', 'lead'], EXCLUDED.role) > array_position(ARRAY['viewer', 'engineer', 'lead'], memberships.role)
           RETURNING role`,
          { bind: [inv.projectId, u.id, inv.role], type: QueryTypes.SELECT, transaction },
        );
        finalRole = row?.role ?? (await Membership.findOne({ where: { projectId: inv.projectId, userId: u.id }, transaction }))!.role;
      }
      return { user: u, created: !!made, role: finalRole };
    });
    // A new account is signed in at once; an existing one signs in with its own password.
    if (created) setSessionCookie(ctx, res, user);
    send<InvitationAccepted>(res, { user: publicUser(user), project: inv.project ? { slug: inv.project.slug, name: inv.project.name } : null, role, signedIn: created });
  });

  return router;
}

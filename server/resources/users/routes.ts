// GET/POST /api/users, PATCH /api/users/:id (admins).
import bcrypt from 'bcryptjs';
import express, { Router } from 'express';
import type { AppContext } from '../../context';
import { isUniqueViolation } from '../../db/index';
import { requireUser } from '../../http/auth';
import { allow, conflict, notFound } from '../../http/errors';
import { normalEmail, publicUser, send } from '../../http/present';
import type { Invitation, PublicUser } from '../../../shared/report/api';
import { checker, idParam } from '../../http/validate';
import { invite, presentInvitation } from '../members/invitations';
import { emailSchema, passwordSchema } from '../members/routes';
import { canChangeOwnAccess, canManageUsers } from './policy';

const json = express.json({ limit: '16kb' });
const checkCreate = checker<{ email: string; name?: string; password?: string; isAdmin?: boolean }>({
  type: 'object', required: ['email'], additionalProperties: false,
  properties: { email: emailSchema, name: { type: 'string', minLength: 1, maxLength: 200 }, password: passwordSchema, isAdmin: { type: 'boolean' } },
});
const checkPatch = checker<{ name?: string; isAdmin?: boolean; active?: boolean }>({
  type: 'object', additionalProperties: false, minProperties: 1,
  properties: { name: { type: 'string', minLength: 1, maxLength: 200 }, isAdmin: { type: 'boolean' }, active: { type: 'boolean' } },
});

export function userRoutes(ctx: AppContext): Router {
  const router = Router();
  const { User } = ctx.db.models;

  router.get('/api/users', async (req, res) => {
    allow(canManageUsers(requireUser(req)), 'Only an admin manages accounts.');
    const users = await User.findAll({ order: [['email', 'ASC']] });
    send<{ users: PublicUser[] }>(res, { users: users.map(publicUser) });
  });

  router.post('/api/users', json, async (req, res) => {
    const actor = requireUser(req);
    allow(canManageUsers(actor), 'Only an admin manages accounts.');
    const body = checkCreate(req.body);
    const email = normalEmail(body.email);
    if (await User.count({ where: { email } })) throw conflict(`An account for ${email} exists already.`, 'email-taken');
    if (!body.password) {
      // Without a password the person is invited and chooses one through the link.
      const inv = await invite(ctx, res, { email, project: null, role: null, isAdmin: body.isAdmin ?? false, inviter: actor });
      send<{ invitation: Invitation }>(res.status(202), { invitation: presentInvitation(inv) });
      return;
    }
    try {
      const user = await User.create({
        email, name: body.name ?? email.split('@')[0]!, isAdmin: body.isAdmin ?? false,
        passwordHash: await bcrypt.hash(body.password, ctx.config.bcryptRounds),
      });
      send<{ user: PublicUser }>(res.status(201), { user: publicUser(user) });
    } catch (err) {
      if (isUniqueViolation(err)) throw conflict(`An account for ${email} exists already.`, 'email-taken');
      throw err;
    }
  });

  router.patch('/api/users/:id', json, async (req, res) => {
    const actor = requireUser(req);
    allow(canManageUsers(actor), 'Only an admin manages accounts.');
    const body = checkPatch(req.body);
    const id = idParam(req.params.id);
    const target = id === null ? null : await User.findByPk(id);
    if (!target) throw notFound('No such user.');
    if (body.active === false || body.isAdmin === false) {
      allow(canChangeOwnAccess(actor, target), 'You cannot deactivate or demote your own account.');
    }
    const deactivating = body.active === false && !target.deactivatedAt;
    await target.update({
      ...(body.name !== undefined ? { name: body.name } : {}),
      ...(body.isAdmin !== undefined ? { isAdmin: body.isAdmin } : {}),
      ...(body.active !== undefined ? { deactivatedAt: body.active ? null : (target.deactivatedAt ?? new Date()) } : {}),
    });
    // Sessions issued before a deactivation stay dead after a reactivation: their epoch is old.
    if (deactivating) await target.increment('sessionEpoch');
    send<{ user: PublicUser }>(res, { user: publicUser(target) });
  });

  return router;
}

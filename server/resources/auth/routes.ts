// POST /api/auth/login, POST /api/auth/logout, GET /api/auth/me.
import bcrypt from 'bcryptjs';
import express, { Router } from 'express';
import { rateLimit } from 'express-rate-limit';
import { QueryTypes } from 'sequelize';
import type { AppContext } from '../../context';
import { clearSessionCookie, requireUser, setSessionCookie } from '../../http/auth';
import { HttpError } from '../../http/errors';
import { normalEmail, publicUser, send } from '../../http/present';
import type { Me } from '../../../shared/report/api';
import { PgRateLimitStore } from '../../http/rateLimitStore';
import { checker } from '../../http/validate';
import { canSignIn } from './policy';

const json = express.json({ limit: '16kb' });

const checkLogin = checker<{ email: string; password: string }>({
  type: 'object',
  required: ['email', 'password'],
  properties: { email: { type: 'string', minLength: 3, maxLength: 320 }, password: { type: 'string', minLength: 1, maxLength: 1000 } },
});

// Compared against when the account does not exist, so both paths cost the same time.
const DUMMY_HASH = bcrypt.hashSync('not a password of anyone', 10);

export function authRoutes(ctx: AppContext): Router {
  const router = Router();
  const { User, Membership, Project } = ctx.db.models;

  const limiter = rateLimit({
    windowMs: ctx.config.login.windowMs,
    limit: ctx.config.login.limit,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    skipSuccessfulRequests: true, // only failed attempts count
    store: new PgRateLimitStore(ctx.db.sequelize, 'login:'),
    handler: (_req, res) => {
      res.status(429).json({ error: { code: 'rate-limited', message: 'Too many failed sign-in attempts; wait a few minutes and try again.' } });
    },
  });

  async function memberships(userId: number) {
    const rows = await Membership.findAll({ where: { userId }, include: [{ model: Project, as: 'project' }], order: [['project', 'slug', 'ASC']] });
    return rows.map((m) => ({ project: { slug: m.project!.slug, name: m.project!.name }, role: m.role }));
  }

  router.post('/api/auth/login', limiter, json, async (req, res) => {
    const body = checkLogin(req.body);
    const user = await User.findOne({ where: { email: normalEmail(body.email) } });
    const ok = await bcrypt.compare(body.password, user?.passwordHash ?? DUMMY_HASH);
    if (!ok || !canSignIn(user)) throw new HttpError(401, 'bad-credentials', 'Wrong e-mail or password, or the account is deactivated.');
    setSessionCookie(ctx, res, user);
    send<Me>(res, { user: publicUser(user), memberships: await memberships(user.id) });
  });

  router.post('/api/auth/logout', async (req, res) => {
    const actor = req.actor;
    if (actor?.kind === 'user') {
      // The token stays signed until it expires, so signing out records its id as revoked.
      await ctx.db.sequelize.query(
        'INSERT INTO revoked_sessions (jti, expires_at) VALUES ($1, $2) ON CONFLICT DO NOTHING',
        { bind: [actor.jti, actor.expiresAt], type: QueryTypes.INSERT },
      );
      await ctx.db.sequelize.query('DELETE FROM revoked_sessions WHERE expires_at < now()');
    }
    clearSessionCookie(ctx, res);
    res.status(204).end();
  });

  router.get('/api/auth/me', async (req, res) => {
    const user = requireUser(req);
    send<Me>(res, { user: publicUser(user), memberships: await memberships(user.id) });
  });

  return router;
}

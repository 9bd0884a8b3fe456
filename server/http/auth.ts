// Who is calling: a signed-in person (session cookie holding a signed JWT) or a CI job (a
// project token in the Authorization header). Anything presented and not valid is refused.
import { createHash, createSecretKey, randomBytes, randomUUID, type KeyObject } from 'node:crypto';
import type { CookieOptions, RequestHandler, Response } from 'express';
import jwt from 'jsonwebtoken';
import { QueryTypes } from 'sequelize';
import type { AppContext } from '../context';
import type { CiToken, User } from '../db/models';
import { HttpError, unauthorized } from './errors';

export const SESSION_COOKIE = 'pleat_session';
export const CI_TOKEN_PREFIX = 'pleat_ci_';

export type Actor =
  | { kind: 'user'; user: User; jti: string; expiresAt: Date }
  | { kind: 'ci'; token: CiToken };

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    interface Request {
      actor?: Actor | null;
      /** Why a presented credential was not accepted (reported when the route needs one). */
      authProblem?: string;
    }
  }
}

/** sha256 is enough for tokens of 256 random bits: there is nothing to guess. */
export function hashSecret(secret: string): string {
  return createHash('sha256').update(secret).digest('hex');
}

/** A new random secret; the caller stores only its hash. */
export function newSecret(prefix = ''): string {
  return prefix + randomBytes(32).toString('base64url');
}

export interface SessionClaims {
  sub: string;
  jti: string;
  exp: number;
  /** The account's session epoch at sign-in (users.session_epoch); tokens without one are epoch 0. */
  ep: number;
}

// jsonwebtoken turns a string secret into a key object on every call, first trying it as a public
// key (an exception each time); one key object per secret saves that on every request.
const keys = new Map<string, KeyObject>();
function keyOf(secret: string): KeyObject {
  let k = keys.get(secret);
  if (!k) keys.set(secret, (k = createSecretKey(Buffer.from(secret))));
  return k;
}

export function signSession(ctx: AppContext, userId: number, epoch = 0): { token: string; jti: string; expiresAt: Date } {
  const jti = randomUUID();
  const seconds = Math.round(ctx.config.sessionHours * 3600);
  const token = jwt.sign({ ep: epoch }, keyOf(ctx.config.jwtSecret), { algorithm: 'HS256', subject: String(userId), jwtid: jti, expiresIn: seconds });
  return { token, jti, expiresAt: new Date(Date.now() + seconds * 1000) };
}

export function verifySession(ctx: AppContext, token: string): SessionClaims | null {
  try {
    const claims = jwt.verify(token, keyOf(ctx.config.jwtSecret), { algorithms: ['HS256'] });
    if (typeof claims !== 'object' || !claims.sub || !claims.jti || !claims.exp) return null;
    const ep = (claims as { ep?: unknown }).ep ?? 0;
    if (typeof ep !== 'number' || !Number.isInteger(ep)) return null;
    return { sub: claims.sub, jti: claims.jti, exp: claims.exp, ep };
  } catch {
    return null;
  }
}

function cookieOptions(ctx: AppContext): CookieOptions {
  return { httpOnly: true, sameSite: 'lax', secure: ctx.config.cookieSecure, path: '/' };
}

export function setSessionCookie(ctx: AppContext, res: Response, user: Pick<User, 'id' | 'sessionEpoch'>): void {
  const s = signSession(ctx, user.id, user.sessionEpoch ?? 0);
  res.cookie(SESSION_COOKIE, s.token, { ...cookieOptions(ctx), expires: s.expiresAt });
}

export function clearSessionCookie(ctx: AppContext, res: Response): void {
  res.clearCookie(SESSION_COOKIE, cookieOptions(ctx));
}

/** Reads the credentials of every request; never rejects by itself (the routes decide). */
export function authenticate(ctx: AppContext): RequestHandler {
  const { User, CiToken } = ctx.db.models;
  return async (req, _res, next) => {
    req.actor = null;
    const header = req.get('authorization');
    if (header) {
      const m = /^Bearer\s+(\S+)$/i.exec(header);
      const secret = m?.[1] ?? '';
      const token = secret.startsWith(CI_TOKEN_PREFIX)
        ? await CiToken.findOne({ where: { tokenHash: hashSecret(secret) } })
        : null;
      if (!token) req.authProblem = 'The CI token is not valid.';
      else if (token.revokedAt) req.authProblem = 'The CI token has been revoked.';
      else {
        req.actor = { kind: 'ci', token };
        // Recorded at most once a minute per token, off the request's path.
        if (!token.lastUsedAt || Date.now() - token.lastUsedAt.getTime() > 60_000) {
          void ctx.db.sequelize.query(
            `UPDATE ci_tokens SET last_used_at = now() WHERE id = $1 AND (last_used_at IS NULL OR last_used_at < now() - interval '1 minute')`,
            { bind: [token.id], type: QueryTypes.UPDATE },
          ).catch(() => {});
        }
      }
      return next();
    }
    const cookie = (req.cookies as Record<string, string> | undefined)?.[SESSION_COOKIE];
    if (cookie) {
      const claims = verifySession(ctx, cookie);
      const userId = claims && /^\d{1,9}$/.test(claims.sub) ? Number(claims.sub) : null;
      if (!claims || userId === null) {
        req.authProblem = 'Your session is not valid or has expired; sign in again.';
        return next();
      }
      // One round trip: the account, unless it is deactivated, was deactivated after this session
      // began (its epoch moved on), or this session was signed out.
      const [user] = await ctx.db.sequelize.query<User>(
        `SELECT * FROM users WHERE id = $1 AND deactivated_at IS NULL AND session_epoch = $3
           AND NOT EXISTS (SELECT 1 FROM revoked_sessions WHERE jti = $2)`,
        { bind: [userId, claims.jti, claims.ep], model: User, mapToModel: true },
      );
      if (!user) {
        req.authProblem = 'Your session has ended; sign in again.';
        return next();
      }
      req.actor = { kind: 'user', user, jti: claims.jti, expiresAt: new Date(claims.exp * 1000) };
    }
    next();
  };
}

/** The signed-in person, or 401 (no or bad credentials) / 403 (a CI token). */
export function requireUser(req: Express.Request): User {
  const actor = req.actor;
  if (actor?.kind === 'user') return actor.user;
  if (actor?.kind === 'ci') throw new HttpError(403, 'user-required', 'A CI token cannot do this; sign in as a person.');
  throw unauthorized(req.authProblem ?? 'Sign in first.', req.authProblem ? 'invalid-credentials' : 'unauthorized');
}

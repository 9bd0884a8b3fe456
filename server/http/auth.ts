// Who is calling: a signed-in person (session cookie holding a signed JWT) or a CI job (a
// project token in the Authorization header). Anything presented and not valid is refused.
import { createHash, createSecretKey, randomBytes, randomUUID, type KeyObject } from 'node:crypto';
import type { CookieOptions, RequestHandler, Response } from 'express';
import jwt from 'jsonwebtoken';
import { QueryTypes, type Model, type ModelStatic } from 'sequelize';
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

// Tokens whose signature and claims were verified, by secret and token text, with their claims:
// a browser sends the same cookie with every request, and verifying it (two base64 decodes, two
// JSON parses, an HMAC) was a tenth of a history page's server CPU. Only what the token itself
// says is kept, and its expiry is still compared with the clock at every request; whether the
// session was signed out, the account deactivated or its epoch moved on is asked of PostgreSQL at
// every request as before (callerSql). A token that fails is not kept, so each try of a forged one
// costs its HMAC as before. Bounded: past VERIFIED_MAX tokens the least recently used go first.
const VERIFIED_MAX = 10_000;
const verified = new Map<string, Map<string, SessionClaims>>();

function remembered(secret: string): Map<string, SessionClaims> {
  let m = verified.get(secret);
  if (!m) verified.set(secret, (m = new Map()));
  return m;
}

export function verifySession(ctx: AppContext, token: string): SessionClaims | null {
  const known = remembered(ctx.config.jwtSecret);
  const hit = known.get(token);
  if (hit) {
    known.delete(token);
    // jsonwebtoken's own test: expired from the second `exp` names on.
    if (Math.floor(Date.now() / 1000) >= hit.exp) return null;
    known.set(token, hit);
    return hit;
  }
  try {
    const claims = jwt.verify(token, keyOf(ctx.config.jwtSecret), { algorithms: ['HS256'] });
    if (typeof claims !== 'object' || !claims.sub || !claims.jti || !claims.exp) return null;
    const ep = (claims as { ep?: unknown }).ep ?? 0;
    if (typeof ep !== 'number' || !Number.isInteger(ep)) return null;
    const ok: SessionClaims = { sub: claims.sub, jti: claims.jti, exp: claims.exp, ep };
    if (known.size >= VERIFIED_MAX) known.delete(known.keys().next().value!);
    known.set(token, ok);
    return ok;
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

/** What a request presented, checked as far as can be done without the database. */
export type Presented =
  | { kind: 'ci'; tokenHash: string }
  | { kind: 'session'; userId: number; jti: string; epoch: number; expiresAt: Date };

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    interface Request {
      /** Set by readCredentials; looked up in the database by lookUpCaller or by projectAccess. */
      presented?: Presented | null;
    }
  }
}

/**
 * Reads the credentials of every request without the database: a CI token's hash, or a session
 * whose signature and expiry hold. A malformed credential is refused here (authProblem); the
 * caller stays unknown (`req.actor` undefined) until one of the two look-ups below runs.
 */
export function readCredentials(ctx: AppContext): RequestHandler {
  return (req, _res, next) => {
    req.presented = null;
    req.actor = undefined;
    const header = req.get('authorization');
    if (header) {
      const m = /^Bearer\s+(\S+)$/i.exec(header);
      const secret = m?.[1] ?? '';
      if (secret.startsWith(CI_TOKEN_PREFIX)) req.presented = { kind: 'ci', tokenHash: hashSecret(secret) };
      else req.authProblem = 'The CI token is not valid.';
      return next();
    }
    const cookie = (req.cookies as Record<string, string> | undefined)?.[SESSION_COOKIE];
    if (cookie) {
      const claims = verifySession(ctx, cookie);
      const userId = claims && /^\d{1,9}$/.test(claims.sub) ? Number(claims.sub) : null;
      if (!claims || userId === null) req.authProblem = 'Your session is not valid or has expired; sign in again.';
      else req.presented = { kind: 'session', userId, jti: claims.jti, epoch: claims.ep, expiresAt: new Date(claims.exp * 1000) };
    }
    next();
  };
}

/**
 * The SQL that finds the presented credential's account or token, refusing one that is revoked:
 * a session whose account is deactivated, was deactivated after the session began (its epoch moved
 * on) or that was signed out; a revoked CI token. Used alone (lookUpCaller) and inside the
 * project's query (access.ts), so a credential is checked the same way on both paths and at every
 * request: nothing about a caller is kept between requests.
 * `$n` numbering starts at `first`; the result is a FROM item named `caller`.
 */
export function callerSql(ctx: AppContext, p: Presented, first: number): { from: string; bind: unknown[] } {
  if (p.kind === 'ci') {
    return {
      from: `(SELECT ${columnsOf(ctx.db.models.CiToken, 't')} FROM ci_tokens t WHERE t.token_hash = $${first}) caller`,
      bind: [p.tokenHash],
    };
  }
  return {
    from: `(SELECT ${columnsOf(ctx.db.models.User, 'u')} FROM users u
             WHERE u.id = $${first} AND u.deactivated_at IS NULL AND u.session_epoch = $${first + 2}
               AND NOT EXISTS (SELECT 1 FROM revoked_sessions WHERE jti = $${first + 1})) caller`,
    bind: [p.userId, p.jti, p.epoch],
  };
}

type ModelClass = ModelStatic<Model>;

/** `alias.column AS "prefix.attribute"` for every attribute of a model: its columns beside another table's in one row. */
export function columnsOf(model: ModelClass, alias: string, prefix = 'caller'): string {
  // Made once per model, alias and prefix: the same text every time (the models do not change).
  let byAlias = columnLists.get(model);
  if (!byAlias) columnLists.set(model, (byAlias = new Map()));
  const key = `${alias} ${prefix}`;
  let list = byAlias.get(key);
  if (list === undefined) {
    list = Object.entries(model.getAttributes() as Record<string, { field?: string }>)
      .map(([attr, a]) => `${alias}.${a.field ?? attr} AS "${prefix}.${attr}"`).join(', ');
    byAlias.set(key, list);
  }
  return list;
}
const columnLists = new WeakMap<ModelClass, Map<string, string>>();

/** The model instance of the `prefix.*` columns of a row, or null when there is none (its id is null). */
export function modelFrom<T>(model: ModelClass, row: Record<string, unknown> | undefined, prefix = 'caller'): T | null {
  if (!row || row[`${prefix}.id`] === null || row[`${prefix}.id`] === undefined) return null;
  const values: Record<string, unknown> = {};
  for (const attr of Object.keys(model.getAttributes())) values[attr] = row[`${prefix}.${attr}`];
  return model.build(values, { isNewRecord: false, raw: true }) as unknown as T;
}

/**
 * Turns the `caller.*` columns of a row into req.actor (or the reason the credential was refused).
 * `row` undefined or its caller columns null: refused.
 */
export function settleCaller(ctx: AppContext, req: Express.Request, row: Record<string, unknown> | undefined): void {
  const p = req.presented;
  req.actor = null;
  if (!p) return;
  if (p.kind === 'ci') {
    const token = modelFrom<CiToken>(ctx.db.models.CiToken, row);
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
    return;
  }
  const user = modelFrom<User>(ctx.db.models.User, row);
  if (!user) req.authProblem = 'Your session has ended; sign in again.';
  else req.actor = { kind: 'user', user, jti: p.jti, expiresAt: p.expiresAt };
}

/** Looks up the presented credential (one round trip); after it, req.actor is the caller or null. */
export async function resolveCaller(ctx: AppContext, req: Express.Request): Promise<void> {
  if (req.actor !== undefined) return;
  const p = req.presented;
  if (!p) {
    req.actor = null;
    return;
  }
  const c = callerSql(ctx, p, 1);
  const rows = await ctx.db.sequelize.query<Record<string, unknown>>(`SELECT * FROM ${c.from}`, { bind: c.bind, type: QueryTypes.SELECT });
  settleCaller(ctx, req, rows[0]);
}

/** Middleware: the caller looked up for every route mounted after it. */
export function lookUpCaller(ctx: AppContext): RequestHandler {
  return async (req, _res, next) => {
    await resolveCaller(ctx, req);
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

// Rate limits and quotas counted in PostgreSQL (server/http/rateLimitStore.ts), so every server
// instance counts the same requests. A refused request gets 429 with Retry-After (RFC 9110,
// section 10.2.3) in seconds, which the CLI's retry honours.
import type { Request, RequestHandler, Response } from 'express';
import { rateLimit } from 'express-rate-limit';
import type { Sequelize } from 'sequelize';
import type { Db } from '../db/index';
import { rawQuery } from '../db/raw';
import { PgRateLimitStore } from './rateLimitStore';

export function pgLimiter(sequelize: Sequelize, o: {
  prefix: string; windowMs: number; limit: number; key: (req: Request) => string; message: string;
}): RequestHandler {
  return rateLimit({
    windowMs: o.windowMs,
    limit: o.limit,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    keyGenerator: o.key,
    store: new PgRateLimitStore(sequelize, o.prefix),
    handler: (req, res) => {
      const reset = (req as Request & { rateLimit?: { resetTime?: Date } }).rateLimit?.resetTime;
      const seconds = reset ? Math.max(1, Math.ceil((reset.getTime() - Date.now()) / 1000)) : Math.ceil(o.windowMs / 1000);
      res.set('Retry-After', String(seconds));
      res.status(429).json({ error: { code: 'rate-limited', message: `${o.message} Try again in ${seconds} s.` } });
    },
  });
}

export interface LimitWindow { prefix: string; windowMs: number; limit: number; message: string }

/** pgLimits' middleware, and the same counters counted inside another statement. */
export interface PgLimits extends RequestHandler {
  /**
   * `access` (a statement of one row) with the counters counted in the same statement, for the
   * key `keySql` (SQL over that row, named `a`) and only when `when` (SQL over `a`) holds; the
   * result is `a`'s row with the counters beside it. Bind parameters are pushed onto `bind`.
   */
  around(access: string, bind: unknown[], keySql: string, when: string): string;
  /** Answers 429 when a counter of such a row is past its limit (true then); false lets the request on. */
  refused(res: Response, row: Record<string, unknown> | undefined): boolean;
}

/**
 * Several counters of one caller (a burst limit and a daily quota) in one statement, so a request
 * pays one round trip for all of them. Each window counts as pgLimiter's store does (a new window
 * starts when the old one has run out), and, as with pgLimiter middlewares in a row, a window is
 * counted only when the windows before it let the request through. A refused request gets the
 * same 429 with Retry-After. `around` counts them inside the statement that finds the caller (the
 * upload: one round trip fewer).
 */
export function pgLimits(db: Db, o: { key: (req: Request) => string; windows: LimitWindow[] }): PgLimits {
  // `source` is the FROM of the first window; each later one is counted from the row of the one
  // before (and `also`, the rows its key is made of).
  const ctes = (param: (v: unknown) => string, keySql: (prefix: string) => string, source: string, also: string) => o.windows.map((w, i) => {
    const from = i === 0 ? source : ` FROM ${also}w${i - 1} WHERE w${i - 1}.hits <= ${o.windows[i - 1]!.limit}`;
    return `w${i} AS (
      INSERT INTO rate_limits (key, hits, reset_at) SELECT ${keySql(param(w.prefix))}, 1, now() + ${param(w.windowMs)}::int * interval '1 millisecond'${from}
      ON CONFLICT (key) DO UPDATE SET
        hits = CASE WHEN rate_limits.reset_at <= now() THEN 1 ELSE rate_limits.hits + 1 END,
        reset_at = CASE WHEN rate_limits.reset_at <= now() THEN EXCLUDED.reset_at ELSE rate_limits.reset_at END
      RETURNING hits, reset_at)`;
  });
  const counters = o.windows.map((_, i) => `(SELECT hits FROM w${i}) AS h${i}, (SELECT reset_at FROM w${i}) AS r${i}`).join(', ');
  const alone: unknown[] = [];
  const sql = `WITH ${ctes((v) => `$${alone.push(v)}`, (prefix) => `(${prefix}::text || $${alone.push(null)}::text)`, '', '').join(',\n')}
    SELECT ${counters}`;
  const refused = (res: Response, row: Record<string, unknown> | undefined): boolean => {
    for (const [i, w] of o.windows.entries()) {
      const hits = row?.[`h${i}`] as number | null;
      if (hits === null || hits === undefined || hits <= w.limit) continue;
      const reset = row![`r${i}`] as Date;
      const seconds = Math.max(1, Math.ceil((reset.getTime() - Date.now()) / 1000));
      res.set('Retry-After', String(seconds));
      res.status(429).json({ error: { code: 'rate-limited', message: `${w.message} Try again in ${seconds} s.` } });
      return true;
    }
    return false;
  };
  const handler = (async (req, res, next) => {
    const key = o.key(req);
    // The statement's parameters in the order it was made: each window's prefix, key, length.
    const bind = o.windows.flatMap((w) => [w.prefix, key, w.windowMs]);
    // On the upload's path: a statement prepared once per connection (server/db/raw.ts).
    const [row] = await rawQuery<Record<string, number | Date | null>>(db, sql, bind);
    if (!refused(res, row)) next();
  }) as PgLimits;
  handler.refused = refused;
  handler.around = (access, bind, keySql, when) => {
    const param = (v: unknown) => `$${bind.push(v)}`;
    return `WITH a AS (${access}),
    ${ctes(param, (prefix) => `${prefix}::text || (${keySql})`, ` FROM a WHERE ${when}`, 'a, ').join(',\n')}
    SELECT a.*, ${counters} FROM a`;
  };
  return handler;
}

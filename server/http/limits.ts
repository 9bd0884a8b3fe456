// Rate limits and quotas counted in PostgreSQL (server/http/rateLimitStore.ts), so every server
// instance counts the same requests. A refused request gets 429 with Retry-After (RFC 9110,
// section 10.2.3) in seconds, which the CLI's retry honours.
import type { Request, RequestHandler } from 'express';
import { rateLimit } from 'express-rate-limit';
import type { Sequelize } from 'sequelize';
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

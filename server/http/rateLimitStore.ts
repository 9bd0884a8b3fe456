// A store for express-rate-limit in PostgreSQL, so that every server instance behind a load
// balancer counts the same attempts (the server keeps no state of its own).
import type { ClientRateLimitInfo, Options, Store } from 'express-rate-limit';
import { QueryTypes, type Sequelize } from 'sequelize';

interface Row { hits: number; reset_at: Date }

export class PgRateLimitStore implements Store {
  windowMs = 60_000;
  localKeys = false;
  constructor(private readonly sequelize: Sequelize, readonly prefix: string) {}

  init(options: Options): void {
    this.windowMs = options.windowMs;
  }

  async get(key: string): Promise<ClientRateLimitInfo | undefined> {
    const rows = await this.sequelize.query<Row>('SELECT hits, reset_at FROM rate_limits WHERE key = $1 AND reset_at > now()', {
      bind: [this.prefix + key], type: QueryTypes.SELECT,
    });
    return rows[0] ? { totalHits: rows[0].hits, resetTime: rows[0].reset_at } : undefined;
  }

  async increment(key: string): Promise<ClientRateLimitInfo> {
    // One statement: a new window starts when the old one has run out.
    const rows = await this.sequelize.query<Row>(
      `INSERT INTO rate_limits (key, hits, reset_at) VALUES ($1, 1, now() + $2 * interval '1 millisecond')
       ON CONFLICT (key) DO UPDATE SET
         hits = CASE WHEN rate_limits.reset_at <= now() THEN 1 ELSE rate_limits.hits + 1 END,
         reset_at = CASE WHEN rate_limits.reset_at <= now() THEN EXCLUDED.reset_at ELSE rate_limits.reset_at END
       RETURNING hits, reset_at`,
      { bind: [this.prefix + key, this.windowMs], type: QueryTypes.SELECT },
    );
    return { totalHits: rows[0]!.hits, resetTime: rows[0]!.reset_at };
  }

  async decrement(key: string): Promise<void> {
    await this.sequelize.query('UPDATE rate_limits SET hits = greatest(hits - 1, 0) WHERE key = $1', { bind: [this.prefix + key] });
  }

  async resetKey(key: string): Promise<void> {
    await this.sequelize.query('DELETE FROM rate_limits WHERE key = $1', { bind: [this.prefix + key] });
  }
}

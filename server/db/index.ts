// One Sequelize connection pool per process, with the models bound to it, and beside it a plain
// `pg` pool of the same database and settings for the routes under load (server/db/raw.ts): their
// statements skip Sequelize's query wrapper and are prepared once per connection.
import pg from 'pg';
import { Sequelize } from 'sequelize';
import { defineModels, type Models } from './models';

export interface Db {
  sequelize: Sequelize;
  models: Models;
  /** The same database through `pg` alone (server/db/raw.ts); connections are made on first use. */
  pg: pg.Pool;
  close(): Promise<void>;
}

export interface DbOptions {
  url: string;
  /** Postgres schema put first on the search_path (tests: one per worker). */
  schema?: string | null;
  pool?: number;
}

export function connectDb({ url, schema, pool = 10 }: DbOptions): Db {
  const sequelize = new Sequelize(url, {
    dialect: 'postgres',
    dialectModule: pg,
    logging: false,
    pool: { max: pool, min: 0, idle: 10_000 },
    dialectOptions: schema ? { options: `-c search_path=${schema}` } : {},
  });
  const models = defineModels(sequelize);
  // The session settings Sequelize gives its connections: the test schema first on the search
  // path, and UTC (Sequelize's SET TIME ZONE '+00:00'), so both pools read the same rows alike.
  // The statements there are prepared (raw.ts) and planned once for any parameters (a generic
  // plan): planning the history page's statement costs more than running it, and its plan (the
  // covering index, newest first, to the limit) does not depend on the values.
  const options = [...(schema ? [`-c search_path=${schema}`] : []), '-c TimeZone=UTC', '-c plan_cache_mode=force_generic_plan'].join(' ');
  const raw = new pg.Pool({ connectionString: url, max: pool, idleTimeoutMillis: 10_000, connectionTimeoutMillis: 60_000, options });
  // An idle connection that the database drops (restart, outage) must not end the process: the
  // next query on the pool gets a new connection, or the error that the outage monitor answers.
  raw.on('error', () => {});
  return { sequelize, models, pg: raw, close: async () => { await Promise.all([sequelize.close(), raw.end()]); } };
}

/** True when an error is Postgres's unique-constraint violation. */
export function isUniqueViolation(err: unknown): boolean {
  const e = err as { name?: string; parent?: { code?: string }; original?: { code?: string } };
  return e?.name === 'SequelizeUniqueConstraintError' || e?.parent?.code === '23505' || e?.original?.code === '23505';
}

// One Sequelize connection pool per process, with the models bound to it.
import pg from 'pg';
import { Sequelize } from 'sequelize';
import { defineModels, type Models } from './models';

export interface Db {
  sequelize: Sequelize;
  models: Models;
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
  return { sequelize, models, close: () => sequelize.close() };
}

/** True when an error is Postgres's unique-constraint violation. */
export function isUniqueViolation(err: unknown): boolean {
  const e = err as { name?: string; parent?: { code?: string }; original?: { code?: string } };
  return e?.name === 'SequelizeUniqueConstraintError' || e?.parent?.code === '23505' || e?.original?.code === '23505';
}

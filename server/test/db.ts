// A private database schema for one test file: created and migrated at the start, dropped at the
// end. Test files therefore run in parallel (vitest workers, or two vitest processes) without
// seeing each other's rows. PostgreSQL is started through scripts/pg.sh when it is not running.
import { execFileSync } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { QueryTypes } from 'sequelize';
import { connectDb, type Db } from '../db/index';
import { migrate } from '../db/migrate';

export const TEST_DATABASE_URL = process.env.PLEAT_TEST_DATABASE_URL
  ?? `postgres://pleat@127.0.0.1:${process.env.PLEAT_PG_PORT ?? 54329}/pleat_test`;

let started = false;

async function reachable(db: Db): Promise<boolean> {
  try {
    await db.sequelize.authenticate();
    return true;
  } catch {
    return false;
  }
}

/** Drops schemas left by test processes that died before their cleanup. */
async function dropStaleSchemas(admin: Db): Promise<void> {
  const rows = await admin.sequelize.query<{ nspname: string }>(
    "SELECT nspname FROM pg_namespace WHERE nspname ~ '^t_[0-9]+_[0-9a-f]+(_queue)?$'", { type: QueryTypes.SELECT },
  );
  for (const { nspname } of rows) {
    const pid = Number(nspname.split('_')[1]);
    let alive = true;
    try { process.kill(pid, 0); } catch (e) { alive = (e as NodeJS.ErrnoException).code === 'EPERM'; }
    if (!alive) await admin.sequelize.query(`DROP SCHEMA IF EXISTS "${nspname}" CASCADE`).catch(() => {});
  }
}

export interface TestDb extends Db {
  schema: string;
  /** The schema of this file's job queue (pg-boss's tables), made by the queue on first use. */
  queueSchema: string;
  /** Empties every table (between groups of tests in one file). */
  truncate(): Promise<void>;
  /** Drops the schema and closes the connections. */
  drop(): Promise<void>;
}

export async function createTestDb(): Promise<TestDb> {
  const admin = connectDb({ url: TEST_DATABASE_URL, pool: 1 });
  if (!(await reachable(admin))) {
    if (!started) {
      started = true;
      execFileSync('bash', ['scripts/pg.sh'], { stdio: 'ignore' });
    }
    if (!(await reachable(admin))) throw new Error(`PostgreSQL is not reachable at ${TEST_DATABASE_URL}; run bash scripts/pg.sh`);
  }
  await dropStaleSchemas(admin);
  const schema = `t_${process.pid}_${randomBytes(4).toString('hex')}`;
  await admin.sequelize.query(`CREATE SCHEMA "${schema}"`);
  const db = connectDb({ url: TEST_DATABASE_URL, schema, pool: 8 });
  await migrate(db.sequelize);
  return {
    ...db,
    schema,
    queueSchema: `${schema}_queue`,
    async truncate() {
      const tables = await db.sequelize.query<{ tablename: string }>(
        "SELECT tablename FROM pg_tables WHERE schemaname = current_schema() AND tablename <> 'pleat_migrations'",
        { type: QueryTypes.SELECT },
      );
      await db.sequelize.query(`TRUNCATE ${tables.map((t) => `"${t.tablename}"`).join(', ')} RESTART IDENTITY CASCADE`);
    },
    async drop() {
      await db.close();
      await admin.sequelize.query(`DROP SCHEMA IF EXISTS "${schema}_queue" CASCADE`);
      await admin.sequelize.query(`DROP SCHEMA IF EXISTS "${schema}" CASCADE`);
      await admin.close();
    },
  };
}

// Applies the schema migrations with umzug. The list is explicit (no glob) so the bundled server
// carries its migrations; the applied names live in the table pleat_migrations of the current
// schema. Several server instances starting at once serialise on an advisory lock.
import type { Sequelize } from 'sequelize';
import { Umzug, type UmzugStorage } from 'umzug';
import * as m001 from './migrations/001-initial';
import * as m002 from './migrations/002-security-and-retention';
import * as m003 from './migrations/003-jobs';
import * as m004 from './migrations/004-host-connections';
import * as m005 from './migrations/005-rule-change-reasons';
import * as m006 from './migrations/006-run-commit-meta';
import * as m007 from './migrations/007-run-design-plan';
import * as m008 from './migrations/008-history-indexes';
import * as m009 from './migrations/009-run-design-hardware';
import * as m010 from './migrations/010-report-lz4';
import * as m011 from './migrations/011-history-page-json';
import type { Migration } from './migrations/types';

const MIGRATIONS: { name: string; up: Migration; down: Migration }[] = [
  { name: '001-initial', ...m001 },
  { name: '002-security-and-retention', ...m002 },
  { name: '003-jobs', ...m003 },
  { name: '004-host-connections', ...m004 },
  { name: '005-rule-change-reasons', ...m005 },
  { name: '006-run-commit-meta', ...m006 },
  { name: '007-run-design-plan', ...m007 },
  { name: '008-history-indexes', ...m008 },
  { name: '009-run-design-hardware', ...m009 },
  { name: '010-report-lz4', ...m010 },
  { name: '011-history-page-json', ...m011 },
];

/** Keeps applied migration names in a table of the connection's own schema (search_path). */
class TableStorage implements UmzugStorage<Sequelize> {
  constructor(private readonly sequelize: Sequelize) {}
  private async ensure(): Promise<void> {
    await this.sequelize.query(
      'CREATE TABLE IF NOT EXISTS pleat_migrations (name text PRIMARY KEY, applied_at timestamptz NOT NULL DEFAULT now())',
    );
  }
  async executed(): Promise<string[]> {
    await this.ensure();
    const [rows] = await this.sequelize.query('SELECT name FROM pleat_migrations ORDER BY name');
    return (rows as { name: string }[]).map((r) => r.name);
  }
  async logMigration({ name }: { name: string }): Promise<void> {
    await this.sequelize.query('INSERT INTO pleat_migrations (name) VALUES ($1)', { bind: [name] });
  }
  async unlogMigration({ name }: { name: string }): Promise<void> {
    await this.sequelize.query('DELETE FROM pleat_migrations WHERE name = $1', { bind: [name] });
  }
}

function umzugFor(sequelize: Sequelize, log: (msg: string) => void): Umzug<Sequelize> {
  const info = (e: Record<string, unknown>) => {
    if (e.event === 'migrated' || e.event === 'reverted') log(`${String(e.event)} ${String(e.name)}`);
  };
  return new Umzug<Sequelize>({
    migrations: MIGRATIONS.map((mig) => ({ name: mig.name, up: mig.up, down: mig.down })),
    context: sequelize,
    storage: new TableStorage(sequelize),
    logger: { info, warn: info, error: info, debug: () => {} },
  });
}

/** Runs every pending migration; returns the names applied. */
export async function migrate(sequelize: Sequelize, log: (msg: string) => void = () => {}): Promise<string[]> {
  // The lock is held by a transaction on one connection while the migrations run on others.
  const tx = await sequelize.transaction();
  try {
    await sequelize.query("SELECT pg_advisory_xact_lock(hashtext('pleat-migrate:' || current_schema()))", { transaction: tx });
    const done = await umzugFor(sequelize, log).up();
    await tx.commit();
    return done.map((d) => d.name);
  } catch (err) {
    await tx.rollback().catch(() => {});
    throw err;
  }
}

/** Reverts every migration (tests and `migrate down` only). */
export async function migrateDownAll(sequelize: Sequelize): Promise<void> {
  await umzugFor(sequelize, () => {}).down({ to: 0 });
}

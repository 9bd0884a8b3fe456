// Statements of the routes under load (the history page, the CI upload) through `pg` alone: no
// Sequelize query wrapper (its bind formatting, hooks and pool), and each statement prepared once
// per connection (a named statement: PostgreSQL parses and analyses its text once, and later runs
// only send Bind/Execute/Sync, which pg corks into one socket write).
import type { QueryResultRow } from 'pg';
import type { Db } from './index';

// One name per statement text. Only texts made from a bounded set of variants come here; past
// MAX_NAMED distinct texts (a caller building texts from data) the rest run unnamed.
const MAX_NAMED = 500;
const names = new Map<string, string>();

function nameOf(text: string): string | undefined {
  let name = names.get(text);
  if (name === undefined && names.size < MAX_NAMED) names.set(text, (name = `pleat_${names.size + 1}`));
  return name;
}

/** Runs a prepared statement on the raw pool; its rows as pg parses them (the same types as Sequelize's raw queries). */
export async function rawQuery<T extends QueryResultRow>(db: Db, text: string, values: unknown[]): Promise<T[]> {
  const r = await db.pg.query<T>({ name: nameOf(text), text, values });
  return r.rows;
}

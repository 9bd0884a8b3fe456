// PostgreSQL restarted under load. A PostgreSQL cluster of this test's own (scripts/pg.sh with
// PLEAT_PG_DIR and PLEAT_PG_PORT: a folder in /tmp and a free port; the shared cluster is never
// touched) is stopped (fast shutdown: PostgreSQL ends every session) and started again while
// clients keep uploading with the CLI's behaviour: retry on 503 or no answer, after Retry-After.
// The server process is not restarted. Every commit ends up stored exactly once, the server
// answered 503 (not 500) meanwhile, and its log says when the database went and came back,
// without stack traces. N is 20 in `npm test`, 200 in `npm run chaos` (PLEAT_CHAOS_UPLOADS).
import { execFileSync } from 'node:child_process';
import { rmSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { QueryTypes } from 'sequelize';
import { connectDb, type Db } from '../../server/db/index';
import { migrate } from '../../server/db/migrate';
import type { AppContext } from '../../server/context';
import type { Project } from '../../server/db/models';
import { makeCiToken, makeProject, makeReport, randomCommit } from '../../server/test/factories';
import { ROOT, ensureServerBuilt, freePort, startServerProcess, type ServerProcess } from './processes';

const N = Math.max(20, Math.floor(Number(process.env.PLEAT_CHAOS_UPLOADS ?? 20)));
const TIMEOUT = 180_000 + N * 1000;
let pgPort: number;
const pgDir = `/tmp/pleat-chaos-pg-${process.pid}`;
let db: Db;
let server: ServerProcess | null = null;
let project: Project;
let token: string;

const pgEnv = () => ({ ...process.env, PLEAT_PG_PORT: String(pgPort), PLEAT_PG_DIR: pgDir });
const pgsh = (action: string) => execFileSync('bash', ['scripts/pg.sh', action], { cwd: ROOT, env: pgEnv(), stdio: ['ignore', 'ignore', 'pipe'] });

beforeAll(async () => {
  await ensureServerBuilt();
  pgPort = await freePort();
  pgsh('start');
  db = connectDb({ url: `postgres://pleat@127.0.0.1:${pgPort}/pleat_test`, pool: 2 });
  await migrate(db.sequelize);
  const ctx = { db } as unknown as AppContext;
  project = await makeProject(ctx);
  token = (await makeCiToken(ctx, project)).secret;
}, 180_000);
afterAll(async () => {
  server?.child.kill('SIGKILL');
  await server?.exited;
  await db?.close().catch(() => {});
  try { pgsh('stop'); } catch { /* not running */ }
  rmSync(pgDir, { recursive: true, force: true });
});

/** Uploads one commit the way the CLI does: again after Retry-After while the answer is 503 or none. */
async function uploadWithRetry(base: string, commit: string, seen: number[]): Promise<number> {
  const body = JSON.stringify(makeReport({ branch: 'restart', commit }));
  for (let attempt = 0; attempt < 200; attempt++) {
    let status = 0;
    let wait = 0.2;
    try {
      const res = await fetch(`${base}/api/projects/${project.slug}/runs`, {
        method: 'POST', headers: { 'Content-Type': 'application/json', Authorization: `Bearer ${token}` }, body,
      });
      await res.arrayBuffer();
      status = res.status;
      wait = Number(res.headers.get('retry-after') ?? 0.2);
    } catch {
      status = 0;
    }
    seen.push(status);
    if (status !== 503 && status !== 0) return status;
    await new Promise((r) => setTimeout(r, Math.min(wait, 1) * 1000));
  }
  return -1;
}

describe('PostgreSQL restarted under load', () => {
  it(`keeps every upload exactly once and recovers without a server restart (${N} uploads)`, async () => {
    server = await startServerProcess('public', undefined, `postgres://pleat@127.0.0.1:${pgPort}/pleat_test`);
    const pid = server.child.pid;
    const commits = Array.from({ length: N }, () => randomCommit());
    const seen: number[] = [];
    let next = 0;
    let done = 0;
    const finals: number[] = [];
    // Eight clients at a time, like eight CI jobs.
    const workers = Array.from({ length: 8 }, async () => {
      while (next < commits.length) {
        const i = next++;
        finals[i] = await uploadWithRetry(server!.url, commits[i]!, seen);
        done++;
      }
    });
    // Restart PostgreSQL once a quarter of the uploads are in.
    while (done < Math.floor(N / 4)) await new Promise((r) => setTimeout(r, 20));
    pgsh('stop');
    await new Promise((r) => setTimeout(r, 1000));
    pgsh('start');
    await Promise.all(workers);

    expect(finals.every((s) => s === 201 || s === 200), JSON.stringify(finals)).toBe(true);
    expect(seen.filter((s) => s >= 500 && s !== 503), 'no 500s, only 503s while the database was away').toEqual([]);
    expect(seen.filter((s) => s === 503).length, 'the restart was noticed').toBeGreaterThan(0);
    const rows = await db.sequelize.query<{ commit: string; n: string }>(
      'SELECT commit, count(*) AS n FROM runs WHERE project_id = $1 AND commit = ANY($2) GROUP BY commit',
      { bind: [project.id, commits], type: QueryTypes.SELECT },
    );
    expect(rows).toHaveLength(N);
    expect(rows.every((r) => Number(r.n) === 1)).toBe(true);
    expect(server.child.pid).toBe(pid);
    expect(server.child.exitCode).toBeNull();
    // The recovery is logged by the outage probe (once a second), which may come just after the last upload.
    await vi.waitFor(() => expect(server!.stderr.join('')).toMatch(/database reachable again/), { timeout: 10_000, interval: 100 });
    const log = server.stderr.join('');
    expect(log).toMatch(/database unreachable/);
    expect(log).not.toMatch(/\n\s+at /);
  }, TIMEOUT);
});

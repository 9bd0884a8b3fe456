// Retention and pruning (server/maintenance.ts) and deleting a project, on real rows: what must
// go goes, everything else stays, and a history page can be read while a deletion runs.
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { JOB_RETENTION_DAYS, runMaintenance } from './maintenance';
import type { Project, User } from './db/models';
import { ingestRun } from './resources/runs/ingest';
import { cookieFor, makeInvitation, makeJob, makeMember, makeProject, makeReport, makeUser } from './test/factories';
import { startTestServer, type TestServer } from './test/server';

let t: TestServer;
const DAY = 24 * 3600 * 1000;

beforeAll(async () => {
  t = await startTestServer();
});
afterAll(async () => t?.close());

async function runsOf(p: Project): Promise<{ branch: string; age: number }[]> {
  return t.db.sequelize.query<{ branch: string; age: number }>(
    `SELECT branch, round(extract(epoch FROM now() - created_at) / 86400)::int AS age FROM runs WHERE project_id = $1 ORDER BY branch, created_at`,
    { bind: [p.id], type: QueryTypes.SELECT },
  );
}

async function history(p: Project, days: number[], branch: string) {
  for (const d of days) await ingestRun(t.ctx, p, makeReport({ branch }), { createdAt: new Date(Date.now() - d * DAY) });
}

describe('retention of branch runs', () => {
  it('a lead sets it; the job deletes older runs of other branches in batches and keeps the base branch', async () => {
    const p = await makeProject(t.ctx, { baseBranch: 'main' });
    const lead: User = await makeMember(t.ctx, p, 'lead');
    await history(p, [100, 40, 5], 'main');
    await history(p, [100, 50, 31, 29, 2], 'feature/a');
    await history(p, [90, 60], 'feature/gone');
    const untouched = await makeProject(t.ctx);
    await history(untouched, [400], 'feature/old');

    const set = await t.http().patch(`/api/projects/${p.slug}`).set('Cookie', cookieFor(t.ctx, lead)).send({ branchRunDays: 30 });
    expect(set.status).toBe(200);
    expect(set.body.project.branchRunDays).toBe(30);
    // Read back through the project's own route (docs/server.md): the stored value, not a default.
    const got = await t.http().get(`/api/projects/${p.slug}`).set('Cookie', cookieFor(t.ctx, lead));
    expect(got.body.project.branchRunDays).toBe(30);
    const bad = await t.http().patch(`/api/projects/${p.slug}`).set('Cookie', cookieFor(t.ctx, lead)).send({ branchRunDays: 0 });
    expect(bad.status).toBe(400);

    const r = await runMaintenance(t.ctx, { batch: 2 });
    expect(r.ran).toBe(true);
    expect(r.runsDeleted).toBe(5); // feature/a: 100, 50, 31; feature/gone: 90, 60
    expect(await runsOf(p)).toEqual([
      { branch: 'feature/a', age: 29 }, { branch: 'feature/a', age: 2 },
      { branch: 'main', age: 100 }, { branch: 'main', age: 40 }, { branch: 'main', age: 5 },
    ]);
    expect((await runsOf(untouched))).toHaveLength(1);
    const branches = await t.http().get(`/api/projects/${p.slug}/branches`).set('Cookie', cookieFor(t.ctx, lead));
    expect(branches.body.branches.map((b: { name: string }) => b.name).sort()).toEqual(['feature/a', 'main']);
    // The change is in the rule history.
    const hist = await t.http().get(`/api/projects/${p.slug}/rules/history`).set('Cookie', cookieFor(t.ctx, lead));
    expect(hist.body.changes[0]).toMatchObject({ rule: 'branch_run_days', oldValue: null, newValue: 30 });
    // A second pass finds nothing more.
    expect((await runMaintenance(t.ctx)).runsDeleted).toBe(0);
  });

  it('a history page is read while a batch holds rows it deletes', async () => {
    const p = await makeProject(t.ctx);
    const viewer = await makeMember(t.ctx, p, 'viewer');
    await history(p, [10, 9, 8], 'feature/x');
    // Another connection holds a deletion open (as a batch does until it commits).
    const tx = await t.db.sequelize.transaction();
    try {
      await t.db.sequelize.query(`DELETE FROM runs WHERE project_id = $1`, { bind: [p.id], transaction: tx });
      const page = await t.http().get(`/api/projects/${p.slug}/branches/${encodeURIComponent('feature/x')}/runs`).set('Cookie', cookieFor(t.ctx, viewer));
      expect(page.status).toBe(200);
      expect(page.body.runs).toHaveLength(3);
    } finally {
      await tx.rollback();
    }
  });

  it('only one process runs a pass at a time (advisory lock)', async () => {
    const results = await Promise.all([runMaintenance(t.ctx), runMaintenance(t.ctx), runMaintenance(t.ctx)]);
    expect(results.filter((r) => r.ran).length).toBeGreaterThanOrEqual(1);
    // Whatever ran, nothing was deleted twice: the totals are those of one pass.
    expect(results.reduce((a, r) => a + r.runsDeleted, 0)).toBe(0);
  });
});

describe('pruning', () => {
  it('deletes expired invitations, spent rate-limit counters and revoked sessions past expiry; keeps live ones', async () => {
    const p = await makeProject(t.ctx);
    const live = await makeInvitation(t.ctx, p);
    const dead = await makeInvitation(t.ctx, p, { expired: true });
    const q = t.db.sequelize;
    await q.query(`INSERT INTO rate_limits (key, hits, reset_at) VALUES ('old', 3, now() - interval '1 hour'), ('new', 1, now() + interval '1 hour')`);
    await q.query(`INSERT INTO revoked_sessions (jti, expires_at) VALUES ('gone', now() - interval '1 minute'), ('kept', now() + interval '1 day')`);
    const r = await runMaintenance(t.ctx);
    expect(r).toMatchObject({ invitationsDeleted: 1, rateLimitsDeleted: 1, revokedSessionsDeleted: 1 });
    const ids = (await t.ctx.db.models.Invitation.findAll()).map((i) => i.id);
    expect(ids).toContain(live.invitation.id);
    expect(ids).not.toContain(dead.invitation.id);
    const [keys] = await q.query('SELECT key FROM rate_limits ORDER BY key');
    expect(keys).toEqual([{ key: 'new' }]);
    const [jtis] = await q.query('SELECT jti FROM revoked_sessions');
    expect(jtis).toEqual([{ jti: 'kept' }]);
  });
});

describe('deleting a project', () => {
  it('needs an admin and the slug repeated in the body; deletes the project and its runs', async () => {
    const admin = await makeUser(t.ctx, { isAdmin: true });
    const p = await makeProject(t.ctx);
    await history(p, [3, 2, 1], 'main');
    const other = await makeProject(t.ctx);
    await history(other, [1], 'main');
    const asAdmin = { Cookie: cookieFor(t.ctx, admin) };
    const none = await t.http().delete(`/api/projects/${p.slug}`).set(asAdmin);
    expect(none.status).toBe(400);
    const wrong = await t.http().delete(`/api/projects/${p.slug}`).set(asAdmin).send({ confirm: other.slug });
    expect(wrong.status).toBe(400);
    expect(wrong.body.error.message).toContain(`{"confirm": "${p.slug}"}`);
    expect(await runsOf(p)).toHaveLength(3);
    const ok = await t.http().delete(`/api/projects/${p.slug}`).set(asAdmin).send({ confirm: p.slug });
    expect(ok.status).toBe(204);
    expect((await t.http().get(`/api/projects/${p.slug}`).set(asAdmin)).status).toBe(404);
    expect(await runsOf(p)).toHaveLength(0);
    expect(await t.ctx.db.models.RunDesign.count({ where: {} })).toBeGreaterThan(0); // the other project's
    expect(await runsOf(other)).toHaveLength(1);
  });
});

describe('retention of finished jobs', () => {
  it('deletes jobs finished more than the retention ago, with their attempts, and keeps the rest', async () => {
    const p = await makeProject(t.ctx);
    const u = await makeMember(t.ctx, p, 'engineer');
    const q = t.db.sequelize;
    const job = async (status: string, finishedDaysAgo: number | null) => {
      const id = await makeJob(t.ctx, p, u);
      await q.query(`UPDATE jobs SET status = $2, finished_at = CASE WHEN $3::int IS NULL THEN NULL ELSE now() - $3::int * interval '1 day' END, created_at = now() - interval '400 days' WHERE id = $1`, { bind: [id, status, finishedDaysAgo] });
      await q.query(`INSERT INTO job_attempts (job_id, attempt, worker, started_at) VALUES ($1, 1, 'test:1', now() - interval '400 days')`, { bind: [id] });
      return id;
    };
    const old = [await job('done', JOB_RETENTION_DAYS + 1), await job('failed', JOB_RETENTION_DAYS + 10), await job('cancelled', 365)];
    const kept = [await job('done', JOB_RETENTION_DAYS - 1), await job('queued', null), await job('running', null)];
    const r = await runMaintenance(t.ctx, { batch: 2 });
    expect(r.jobsDeleted).toBeGreaterThanOrEqual(old.length);
    const left = await q.query<{ id: number }>('SELECT id FROM jobs WHERE project_id = $1 ORDER BY id', { bind: [p.id], type: QueryTypes.SELECT });
    expect(left.map((x) => x.id)).toEqual(kept);
    const attempts = await q.query<{ n: string }>('SELECT count(*) AS n FROM job_attempts WHERE job_id = ANY($1::int[])', { bind: [old], type: QueryTypes.SELECT });
    expect(Number(attempts[0].n)).toBe(0);
  });
});

// Uploads from CI, the branch history and the run page's comparison against the base branch.
import { readdirSync, readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildReport } from '../../../shared/report/report';
import type { Report } from '../../../shared/types';
import { checkDesignText } from '../../engine';
import { cookieFor, designEntry, makeCiToken, makeMember, makeProject, makeReport, randomCommit } from '../../test/factories';
import { startTestServer, type TestServer } from '../../test/server';
import type { Project, User } from '../../db/models';
import { ingestRun } from './ingest';

let t: TestServer;
let project: Project;
let token: string;
let viewer: User;

beforeAll(async () => {
  t = await startTestServer();
  project = await makeProject(t.ctx);
  token = (await makeCiToken(t.ctx, project)).secret;
  viewer = await makeMember(t.ctx, project, 'viewer');
});
afterAll(async () => t?.close());

const upload = (report: unknown, secret = token, slug = project.slug) =>
  t.http().post(`/api/projects/${slug}/runs`).set('Authorization', `Bearer ${secret}`).send(report as object);
const read = (path: string) => t.http().get(path).set('Cookie', cookieFor(t.ctx, viewer));
const count = async (sql: string, bind: unknown[] = []) => {
  const [rows] = await t.db.sequelize.query(sql, { bind });
  return Number((rows as { n: string }[])[0]!.n);
};

/** The report the CLI writes for the example designs, made by the real engine (shared/). */
function engineReport(branch: string, commit: string): Report {
  const dir = new URL('../../../examples/', import.meta.url);
  const files = readdirSync(dir).filter((f) => f.endsWith('.fold.yaml') && !f.startsWith('generated')).sort();
  const designs = files.map((f) => checkDesignText(readFileSync(new URL(f, dir), 'utf8'), f, null).design);
  return buildReport({ version: '0.1.0', git: { branch, commit }, rules: {}, designs });
}

describe('POST /api/projects/:slug/runs', () => {
  it('stores a report of the real engine and files its numbers', async () => {
    const report = engineReport('main', randomCommit());
    const res = await upload(report);
    expect(res.status).toBe(201);
    expect(res.body.created).toBe(true);
    expect(res.body.url).toBe(`http://pleat.test/projects/${project.slug}/runs/${res.body.run.id}`);
    const s = res.body.run.summary;
    expect(s.designs).toBe(report.designs.length);
    expect(s.failed).toBe(report.designs.filter((d) => d.status === 'fail').length);
    const utils = report.designs.flatMap((d) => (d.utilization ? [d.utilization.overall] : []));
    expect(s.utilization).toBeCloseTo(utils.reduce((a, b) => a + b, 0) / utils.length, 12);
    const got = await read(`/api/runs/${res.body.run.id}`);
    expect(got.status).toBe(200);
    expect(got.body.report).toEqual(JSON.parse(JSON.stringify(report)));
    expect(got.body.run.designs.map((d: { name: string }) => d.name)).toEqual(report.designs.map((d) => d.name));
    // The plan's figures beside each design, as the engine's report has them.
    expect(got.body.run.designs.map((d: { factor: number | null; units: number | null; latencyAdded: number | null }) => [d.factor, d.units, d.latencyAdded]))
      .toEqual(report.designs.map((d) => [d.factor ?? null, d.schedule?.length ?? null, d.retiming?.latencyAdded ?? null]));
  });

  it('keeps one run per commit: a second upload of the same commit returns the first (200)', async () => {
    const commit = randomCommit();
    const first = await upload(makeReport({ branch: 'dup', commit }));
    const second = await upload(makeReport({ branch: 'dup', commit, designs: [designEntry('other', { status: 'fail' })] }));
    expect([first.status, second.status]).toEqual([201, 200]);
    expect(second.body.created).toBe(false);
    expect(second.body.run.id).toBe(first.body.run.id);
    expect(second.body.run.verdict).toBe('pass'); // the first upload wins
    expect(await count('SELECT count(*) AS n FROM runs WHERE commit = $1', [commit])).toBe(1);
  });

  it('keeps one run when the same commit arrives many times at once', async () => {
    const commit = randomCommit().toUpperCase(); // commits are compared without case
    const report = makeReport({ branch: 'race', commit, designs: [designEntry('a'), designEntry('b')] });
    const results = await Promise.all(Array.from({ length: 8 }, () => upload(report)));
    const statuses = results.map((r) => r.status).sort();
    expect(statuses).toEqual([200, 200, 200, 200, 200, 200, 200, 201]);
    expect(new Set(results.map((r) => r.body.run.id)).size).toBe(1);
    expect(await count('SELECT count(*) AS n FROM runs WHERE commit = $1', [commit.toLowerCase()])).toBe(1);
    expect(await count('SELECT count(*) AS n FROM run_designs WHERE run_id = $1', [results[0]!.body.run.id])).toBe(2);
  });

  it('refuses bodies that are not a report, with the problem named', async () => {
    const noCommit = makeReport() as unknown as { git: Record<string, unknown> };
    delete noCommit.git.commit;
    const res = await upload(noCommit);
    expect(res.status).toBe(400);
    expect(res.body.error.details).toContainEqual({ path: '/git', message: "must have required property 'commit'" });
    expect((await upload({ ...makeReport(), format: 'pleat-report/9' })).status).toBe(400);
    expect((await upload({ ...makeReport(), verdict: 'great' })).status).toBe(400);
    const notJson = await t.http().post(`/api/projects/${project.slug}/runs`).set('Authorization', `Bearer ${token}`)
      .set('Content-Type', 'application/json').send('{"format": ');
    expect(notJson.status).toBe(400);
    expect(notJson.body.error.code).toBe('invalid-json');
  });

  it('refuses a report over the size limit with 413', async () => {
    const small = await (await import('../../test/server')).startTestServer({ config: { maxReportBytes: 4096 } });
    try {
      const p = await makeProject(small.ctx);
      const secret = (await makeCiToken(small.ctx, p)).secret;
      const big = makeReport({ designs: Array.from({ length: 40 }, (_, i) => designEntry(`d${i}`)) });
      const res = await small.http().post(`/api/projects/${p.slug}/runs`).set('Authorization', `Bearer ${secret}`).send(big);
      expect(res.status).toBe(413);
      expect(res.body.error.code).toBe('too-large');
    } finally {
      await small.close();
    }
  });

  it('refuses revoked, unknown and other projects\' tokens', async () => {
    const revoked = await makeCiToken(t.ctx, project, { revoked: true });
    const r1 = await upload(makeReport(), revoked.secret);
    expect(r1.status).toBe(401);
    expect(r1.body.error.message).toMatch(/revoked/);
    expect((await upload(makeReport(), `${token}x`)).status).toBe(401);
    const other = await makeProject(t.ctx);
    const otherToken = (await makeCiToken(t.ctx, other)).secret;
    const r3 = await upload(makeReport(), otherToken);
    expect(r3.status).toBe(403);
    expect(r3.body.error.code).toBe('wrong-project');
  });
});

describe('concurrent uploads written together', () => {
  // The contract of docs/server.md: one run per (project, branch, commit), its design rows, and
  // the branch pointer on the newest run; uploads that arrive together are written by one statement.
  it('gives every upload its own outcome: new runs, repeats of a commit, design rows, branch pointers', async () => {
    const p = await makeProject(t.ctx);
    const commits = Array.from({ length: 8 }, () => randomCommit());
    const reports = [
      ...commits.map((commit, i) => makeReport({ branch: i % 2 ? 'feature/a' : 'feature/b', commit, designs: [designEntry('alpha'), designEntry(`b${i}`, { registers: i })] })),
      makeReport({ branch: 'feature/a', commit: commits[1]!.toUpperCase() }), // the same commit again, upper case
      makeReport({ branch: 'feature/b', commit: commits[0]! }),
    ];
    const stored = await Promise.all(reports.map((r) => ingestRun(t.ctx, p, r)));
    expect(stored.map((s) => s.created)).toEqual([...commits.map(() => true), false, false]);
    expect(stored[8]!.id).toBe(stored[1]!.id);
    expect(stored[9]!.id).toBe(stored[0]!.id);
    expect(new Set(stored.map((s) => s.id)).size).toBe(8);
    expect(await count('SELECT count(*) AS n FROM runs WHERE project_id = $1', [p.id])).toBe(8);
    expect(await count('SELECT count(*) AS n FROM run_designs d JOIN runs r ON r.id = d.run_id WHERE r.project_id = $1', [p.id])).toBe(16);
    // Each run keeps its own design rows, in the report's order.
    const [rows] = await t.db.sequelize.query(
      'SELECT r.commit, d.design_name, d.register_minimum FROM run_designs d JOIN runs r ON r.id = d.run_id WHERE r.project_id = $1 ORDER BY d.id', { bind: [p.id] });
    const byCommit = new Map<string, string[]>();
    for (const row of rows as { commit: string; design_name: string }[]) byCommit.set(row.commit, [...(byCommit.get(row.commit) ?? []), row.design_name]);
    commits.forEach((c, i) => expect(byCommit.get(c)).toEqual(['alpha', `b${i}`]));
    // The branch pointer is the newest run of each branch.
    const [branches] = await t.db.sequelize.query(
      `SELECT b.name, b.last_run_id, (SELECT id FROM runs r WHERE r.project_id = b.project_id AND r.branch = b.name ORDER BY created_at DESC, id DESC LIMIT 1) AS newest
       FROM branches b WHERE b.project_id = $1 ORDER BY b.name`, { bind: [p.id] });
    expect((branches as { name: string }[]).map((b) => b.name)).toEqual(['feature/a', 'feature/b']);
    for (const b of branches as { last_run_id: number; newest: number }[]) expect(b.last_run_id).toBe(b.newest);
  });
});

describe('a failing upload among concurrent ones', () => {
  it('fails alone: the others are written one by one', async () => {
    const p = await makeProject(t.ctx);
    const good = Array.from({ length: 4 }, () => makeReport({ branch: 'main' }));
    // A verdict the runs table's CHECK constraint refuses (the route's schema check would stop it first).
    const bad = { ...makeReport({ branch: 'main' }), verdict: 'maybe' } as unknown as Report;
    const outcomes = await Promise.allSettled([good[0]!, bad, ...good.slice(1)].map((r) => ingestRun(t.ctx, p, r)));
    expect(outcomes.map((o) => o.status)).toEqual(['fulfilled', 'rejected', 'fulfilled', 'fulfilled', 'fulfilled']);
    expect(await count('SELECT count(*) AS n FROM runs WHERE project_id = $1', [p.id])).toBe(4);
  });
});

describe('GET /api/projects/:slug/branches/:branch/runs', () => {
  it('pages newest first by (created_at, id) without gaps or repeats, also for equal times', async () => {
    const base = Date.parse('2024-03-01T10:00:00.000Z');
    const times = [0, 60_000, 60_000, 60_000, 120_000, 180_000, 240_000]; // three runs share one timestamp
    const ids: number[] = [];
    for (const [i, dt] of times.entries()) {
      const designs = [designEntry('alpha', { utilization: 0.5 + i / 100 }), ...(i % 2 ? [designEntry('beta')] : [])];
      ids.push((await ingestRun(t.ctx, project, makeReport({ branch: 'feature/paging', designs }), { createdAt: new Date(base + dt) })).id);
    }
    const expected = ids.map((id, i) => ({ id, at: base + times[i]! })).sort((a, b) => b.at - a.at || b.id - a.id).map((r) => r.id);
    const seen: number[] = [];
    let cursor: string | null = null;
    let pages = 0;
    do {
      const q: string = `/api/projects/${project.slug}/branches/${encodeURIComponent('feature/paging')}/runs?limit=3${cursor ? `&cursor=${encodeURIComponent(cursor)}` : ''}`;
      const res = await read(q);
      expect(res.status).toBe(200);
      seen.push(...res.body.runs.map((r: { id: number }) => r.id));
      cursor = res.body.nextCursor;
      pages++;
    } while (cursor && pages < 10);
    expect(seen).toEqual(expected);
    expect(pages).toBe(3);

    // A page by number (offset) gives the same runs as walking the cursor there.
    const byOffset: number[] = [];
    for (const offset of [0, 3, 6]) {
      const res = await read(`/api/projects/${project.slug}/branches/feature%2Fpaging/runs?limit=3&offset=${offset}`);
      expect(res.status).toBe(200);
      byOffset.push(...res.body.runs.map((r: { id: number }) => r.id));
    }
    expect(byOffset).toEqual(expected);
    expect((await read(`/api/projects/${project.slug}/branches/feature%2Fpaging/runs?offset=-1`)).status).toBe(400);
    expect((await read(`/api/projects/${project.slug}/branches/feature%2Fpaging/runs?offset=1.5`)).status).toBe(400);

    const filtered = await read(`/api/projects/${project.slug}/branches/feature%2Fpaging/runs?design=beta`);
    expect(filtered.body.runs.map((r: { id: number }) => r.id)).toEqual(expected.filter((id) => ids.indexOf(id) % 2 === 1));
    expect(filtered.body.runs.every((r: { designs: { name: string }[] }) => r.designs.length === 1 && r.designs[0]!.name === 'beta')).toBe(true);
  });

  it("keeps the first line of the commit's message, its author and the utilization floor the run was checked under", async () => {
    const report = { ...makeReport({ branch: 'feature/meta' }), rules: { min_utilization: { value: 0.65, source: 'team' as const } } };
    report.git = { ...report.git, message: 'Fold the notch tighter\n\nN = 3 frees a multiplier.', author: 'Rhea Router' };
    expect((await upload(report)).status).toBe(201);
    const bare = makeReport({ branch: 'feature/meta' }); // an older CLI: no message, no author, no floor
    expect((await upload(bare)).status).toBe(201);
    const res = await read(`/api/projects/${project.slug}/branches/feature%2Fmeta/runs`);
    const [older, newer] = [...res.body.runs].reverse();
    expect([newer.message, newer.author, newer.utilizationFloor]).toEqual([null, null, null]);
    expect([older.message, older.author, older.utilizationFloor]).toEqual(['Fold the notch tighter', 'Rhea Router', 0.65]);
  });

  it('gives each run in the shape of the run page (GET /api/runs/:id), dates as Date.toJSON writes them', async () => {
    const at = new Date('2024-05-06T07:08:09.123Z');
    const { id } = await ingestRun(t.ctx, project, makeReport({ branch: 'feature/shape', designs: [designEntry('alpha', { utilization: 0.1 + 0.2, registers: 7 }), designEntry('beta')] }), { createdAt: at });
    const page = await read(`/api/projects/${project.slug}/branches/feature%2Fshape/runs`);
    expect(page.status).toBe(200);
    expect(page.body.nextCursor).toBeNull();
    const detail = await read(`/api/runs/${id}`);
    const { project: _project, ...run } = detail.body.run;
    expect(page.body.runs).toEqual([run]);
    expect(page.body.runs[0].createdAt).toBe(at.toJSON());
    expect(page.body.runs[0].designs[0].utilization).toBe(0.1 + 0.2); // a double kept to the last bit
  });

  it('refuses a cursor it did not give out and a limit out of range', async () => {
    expect((await read(`/api/projects/${project.slug}/branches/main/runs?cursor=yesterday`)).status).toBe(400);
    expect((await read(`/api/projects/${project.slug}/branches/main/runs?limit=0`)).status).toBe(400);
    expect((await read(`/api/projects/${project.slug}/branches/main/runs?limit=201`)).status).toBe(400);
  });
});

describe('GET /api/runs/:id comparison with the base branch', () => {
  let p: Project;
  const at = (min: number) => new Date(Date.parse('2024-04-01T00:00:00Z') + min * 60_000);
  const mainA = randomCommit();
  const mainB = randomCommit();

  beforeAll(async () => {
    p = await makeProject(t.ctx, { regressionTolerance: 0.1 });
    await makeMember(t.ctx, p, 'viewer').then((u) => { viewer = u; });
    await ingestRun(t.ctx, p, makeReport({ branch: 'main', commit: mainA, designs: [designEntry('fir', { utilization: 0.8, registers: 10 }), designEntry('gone')] }), { createdAt: at(0) });
    await ingestRun(t.ctx, p, makeReport({ branch: 'main', commit: mainB, designs: [designEntry('fir', { utilization: 0.9, registers: 8 })] }), { createdAt: at(10) });
  });

  async function runOn(report: Report, minute: number) {
    const { id } = await ingestRun(t.ctx, p, report, { createdAt: at(minute) });
    const res = await read(`/api/runs/${id}`);
    expect(res.status).toBe(200);
    return res.body;
  }

  it('uses the base branch run at the merge-base commit the CLI sent', async () => {
    const body = await runOn(makeReport({ branch: 'topic', baseBranch: 'main', baseCommit: mainA,
      designs: [designEntry('fir', { utilization: 0.7, registers: 12, status: 'fail' }), designEntry('new')] }), 20);
    expect(body.comparison.basis).toBe('merge-base');
    expect(body.comparison.baseRun.commit).toBe(mainA);
    const fir = body.comparison.designs.find((d: { name: string }) => d.name === 'fir');
    expect(fir.utilization.base).toBe(0.8);
    expect(fir.utilization.current).toBe(0.7);
    expect(fir.utilization.delta).toBeCloseTo(-0.1, 12);
    expect(fir.registerMinimum).toEqual({ current: 12, base: 10, delta: 2 });
    expect(fir.violations).toEqual({ current: 1, base: 0, delta: 1 });
    expect(fir.factor).toEqual({ current: 4, base: 4, delta: 0 });
    expect(fir.units).toEqual({ current: null, base: null, delta: null });
    // 0.8 -> 0.7 is a 12.5% drop and 10 -> 12 a 20% rise: both past the 10% tolerance.
    expect(fir.regressions).toEqual(['status', 'utilization', 'registerMinimum', 'violations']);
    expect(body.comparison.designs.map((d: { name: string; presence: string }) => [d.name, d.presence]))
      .toEqual([['fir', 'kept'], ['new', 'added'], ['gone', 'removed']]);
  });

  it('falls back to the nearest earlier run of the base branch when the merge base was never uploaded', async () => {
    const body = await runOn(makeReport({ branch: 'topic2', baseCommit: randomCommit(), designs: [designEntry('fir', { utilization: 0.85, registers: 8 })] }), 15);
    expect(body.comparison.basis).toBe('nearest-earlier');
    expect(body.comparison.baseRun.commit).toBe(mainB);
    const fir = body.comparison.designs[0];
    // 0.9 -> 0.85 is a 5.6% drop: inside the 10% tolerance, so no regression.
    expect(fir.regressions).toEqual([]);
  });

  it('says none when the base branch has no earlier run', async () => {
    const body = await runOn(makeReport({ branch: 'early', designs: [designEntry('fir')] }), -5);
    expect(body.comparison.basis).toBe('none');
    expect(body.comparison.baseRun).toBeNull();
    expect(body.comparison.designs).toEqual([]);
  });

  it('lists branches with the base first, the latest verdict and a trend in time order', async () => {
    const res = await read(`/api/projects/${p.slug}/branches`);
    expect(res.status).toBe(200);
    const names = res.body.branches.map((b: { name: string }) => b.name);
    expect(names[0]).toBe('main');
    expect(new Set(names)).toEqual(new Set(['main', 'topic', 'topic2', 'early']));
    const main = res.body.branches[0];
    expect(main.isBase).toBe(true);
    expect(main.latest.commit).toBe(mainB);
    // A run's utilization is the mean over its designs: (0.8 + 0.5) / 2, then 0.9 alone.
    expect(main.trend.map((x: { utilization: number }) => x.utilization)).toEqual([0.65, 0.9]);
    expect(main.trend.map((x: { registerMinimum: number }) => x.registerMinimum)).toEqual([14, 8]);
    const topic = res.body.branches.find((b: { name: string }) => b.name === 'topic');
    expect(topic.latest.verdict).toBe('fail');
  });

  it('answers 404 for a run id that does not exist or is not a number', async () => {
    expect((await read('/api/runs/999999')).status).toBe(404);
    expect((await read('/api/runs/abc')).status).toBe(404);
  });
});

describe('migrations 006 and 007 on runs stored before them', () => {
  it('fill the commit facts, the floor and the plan figures from the stored reports', async () => {
    const m005 = await import('../../db/migrations/006-run-commit-meta');
    const m006 = await import('../../db/migrations/007-run-design-plan');
    const report = { ...engineReport('feature/backfill', randomCommit()), rules: { min_utilization: { value: 0.55, source: 'repository' as const } } };
    report.git = { ...report.git, message: 'Refold the notch\nbody text', author: 'Ines Delaney' };
    const { id } = await ingestRun(t.ctx, project, report);
    const sequelize = t.db.sequelize;
    const params = { context: sequelize, name: 'test' } as unknown as Parameters<typeof m005.up>[0];
    // As before the migrations: the columns are gone; then the migrations run again over the stored row.
    await m006.down(params);
    await m005.down(params);
    await m005.up(params);
    await m006.up(params);
    const member = await makeMember(t.ctx, project, 'viewer');
    const got = await t.http().get(`/api/runs/${id}`).set('Cookie', cookieFor(t.ctx, member));
    expect(got.status).toBe(200);
    expect([got.body.run.message, got.body.run.author, got.body.run.utilizationFloor]).toEqual(['Refold the notch', 'Ines Delaney', 0.55]);
    expect(got.body.run.designs.map((d: { factor: number | null; units: number | null; latencyAdded: number | null }) => [d.factor, d.units, d.latencyAdded]))
      .toEqual(report.designs.map((d) => [d.factor ?? null, d.schedule?.length ?? null, d.retiming?.latencyAdded ?? null]));
  });
});

// The job routes: what a start request must hold, designs from a stored run or from a text,
// listing, progress and results, cancel. The worker here is the real worker code on the real
// queue, run inside the test process (the process-level behaviour is in workers.test.ts).
// Planned designs are checked by the checking engine itself (shared/analyze.ts through
// server/engine.ts, the code behind `pleat check`), and the written file by js-yaml, a parser
// independent of the yaml package that wrote it.
import { load as yamlLoad } from 'js-yaml';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { JobDetail } from '../../../shared/report/api';
import { checkDesignText } from '../../engine';
import { loadPlanner } from '../../jobs/planner';
import { startWorker, type WorkerHandle } from '../../jobs/worker';
import { cookieFor, makeMember, makeProject, makeReport } from '../../test/factories';
import type { TestServer } from '../../test/server';
import { EXAMPLE as example, startJobTestServer, UNPLACED } from '../../test/jobs';
import { ingestRun } from '../runs/ingest';
import type { Project, User } from '../../db/models';


let t: TestServer;
let project: Project;
let engineer: User;
let viewer: User;
let worker: WorkerHandle | null = null;

beforeAll(async () => {
  ({ t, project, engineer } = await startJobTestServer());
  viewer = await makeMember(t.ctx, project, 'viewer');
}, 60_000);

afterAll(async () => {
  await worker?.stop();
  await t?.close();
});

const as = (u: User) => ({ Cookie: cookieFor(t.ctx, u) });
const post = (body: object, u = engineer) => t.http().post(`/api/projects/${project.slug}/jobs`).set(as(u)).send(body);
const get = async (id: number, u = engineer): Promise<JobDetail> => (await t.http().get(`/api/jobs/${id}`).set(as(u))).body.job;
async function until(id: number, done: (j: JobDetail) => boolean): Promise<JobDetail> {
  for (;;) {
    const j = await get(id);
    if (done(j)) return j;
    await new Promise((r) => setTimeout(r, 150));
  }
}
const ended = (j: JobDetail) => ['done', 'failed', 'cancelled'].includes(j.status);

describe('starting jobs', () => {
  it('refuses requests that do not say what to plan, with the problem named', async () => {
    const cases: [object, RegExp][] = [
      [{ kind: 'plan' }, /design/],
      [{ kind: 'fold', design: { text: UNPLACED } }, /kind/],
      [{ kind: 'sweep', design: { text: UNPLACED } }, /factors/],
      [{ kind: 'plan', design: { text: UNPLACED }, factors: [2, 3] }, /factor/],
      [{ kind: 'plan', design: { text: UNPLACED }, timeLimitSeconds: 0 }, /timeLimitSeconds/],
      [{ kind: 'plan', design: { text: UNPLACED }, units: { mul: 0 } }, /units/],
    ];
    for (const [body, message] of cases) {
      const res = await post(body);
      expect(res.status, JSON.stringify(body)).toBe(400);
      expect(res.body.error.message + JSON.stringify(res.body.error.details ?? [])).toMatch(message);
    }
  });

  it("plans a stored run's design from the text the run carries, and says so when a run has none", async () => {
    const withSource = makeReport({ designs: [{ ...makeReport().designs[0]!, name: 'frontend', file: 'hw/frontend.fold.yaml', source: UNPLACED } as never] });
    const run = await ingestRun(t.ctx, project, withSource);
    const res = await post({ kind: 'plan', design: { runId: run.id, name: 'frontend' }, timeLimitSeconds: 2 });
    expect(res.status, res.text).toBe(201);
    expect(res.body.job).toMatchObject({ kind: 'plan', status: 'queued', design: { file: 'hw/frontend.fold.yaml', name: 'frontend', runId: run.id } });
    const bare = await ingestRun(t.ctx, project, makeReport());
    const refused = await post({ kind: 'plan', design: { runId: bare.id, name: 'notch' } });
    expect(refused.status).toBe(422);
    expect(refused.body.error.code).toBe('no-design-source');
    const other = await makeProject(t.ctx);
    const foreign = await ingestRun(t.ctx, other, withSource);
    expect((await post({ kind: 'plan', design: { runId: foreign.id, name: 'frontend' } })).status).toBe(404);
  });

  it('cancels a queued job at once and refuses to cancel it twice', async () => {
    const res = await post({ kind: 'plan', design: { text: UNPLACED }, timeLimitSeconds: 1 });
    const id = res.body.job.id;
    expect((await t.http().post(`/api/jobs/${id}/cancel`).set(as(viewer))).status).toBe(403);
    const cancel = await t.http().post(`/api/jobs/${id}/cancel`).set(as(engineer));
    expect(cancel.status).toBe(200);
    expect(cancel.body.job).toMatchObject({ status: 'cancelled', cancelRequested: true });
    const again = await t.http().post(`/api/jobs/${id}/cancel`).set(as(engineer));
    expect(again.status).toBe(409);
    expect(again.body.error.code).toBe('job-finished');
  });

  it('lists the project\'s jobs newest first, to viewers too', async () => {
    const res = await t.http().get(`/api/projects/${project.slug}/jobs`).set(as(viewer));
    expect(res.status).toBe(200);
    const ids = res.body.jobs.map((j: { id: number }) => j.id);
    expect(ids.length).toBeGreaterThanOrEqual(2);
    expect([...ids].sort((a, b) => b - a)).toEqual(ids);
  });
});

describe('jobs run by a worker', () => {
  beforeAll(async () => {
    // Nothing queued before this point should run: the jobs above were for the routes only.
    await t.db.sequelize.query(`UPDATE jobs SET status = 'cancelled', cancel_requested = true WHERE status = 'queued'`);
    // The worker holds its first job a moment, so that the cancel below reaches a running job.
    worker = await startWorker({ ...t.ctx.config, jobs: { ...t.ctx.config.jobs, holdMs: 1500 } }, t.db, await loadPlanner(), () => {});
  });

  it('cancels a running job: its worker stops and keeps no result', async () => {
    const res = await post({ kind: 'plan', design: { text: UNPLACED }, timeLimitSeconds: 2 });
    const id = res.body.job.id;
    await until(id, (j) => j.status === 'running');
    const cancel = await t.http().post(`/api/jobs/${id}/cancel`).set(as(engineer));
    expect(cancel.status).toBe(200);
    expect(cancel.body.job).toMatchObject({ status: 'running', cancelRequested: true });
    const j = await until(id, ended);
    expect(j.status).toBe('cancelled');
    expect(j.result).toBeNull();
    expect(j.attempts.map((a) => a.outcome)).toEqual(['cancelled']);
  }, 60_000);

  it('plans a design without sets into a file that the checking engine passes', async () => {
    const res = await post({ kind: 'plan', design: { text: UNPLACED, file: 'frontend.fold.yaml' }, timeLimitSeconds: 3 });
    const j = await until(res.body.job.id, ended);
    expect(j.status, j.error ?? '').toBe('done');
    expect(j.progress?.phase).toEqual(expect.any(String));
    expect(j.attempts).toEqual([expect.objectContaining({ attempt: 1, outcome: 'done' })]);
    if (j.result?.kind !== 'plan') throw new Error('not a plan result');
    const { plan, plannedText, current } = j.result;
    expect(current).toBeNull(); // the design had no sets of its own
    expect(['optimal', 'feasible']).toContain(plan.status);
    // The written file: the same document with the plan's sets (js-yaml, an independent parser).
    const before = yamlLoad(UNPLACED) as Record<string, any>;
    const after = yamlLoad(plannedText!) as Record<string, any>;
    expect(after.folding.sets).toEqual(plan.sets);
    expect({ ...after, folding: { ...after.folding, sets: undefined } }).toEqual({ ...before, folding: { ...before.folding, sets: undefined } });
    // Every line of the original is still there, in order, comments included.
    const kept = plannedText!.split('\n');
    let at = 0;
    for (const line of UNPLACED.split('\n')) {
      at = kept.indexOf(line, at);
      expect(at, line).toBeGreaterThanOrEqual(0);
    }
    // `pleat check`'s engine: the plan folds, with the registers the planner reported.
    const checked = checkDesignText(plannedText!, 'frontend.fold.yaml', null).design;
    expect(checked.status, JSON.stringify(checked.diagnostics)).toBe('pass');
    expect(checked.registers?.minimum).toBe(plan.objective!.registers);
  }, 60_000);

  it('compares with the design\'s own plan when it has one', async () => {
    const res = await post({ kind: 'plan', design: { text: example, file: 'frontend.fold.yaml' }, timeLimitSeconds: 2 });
    const j = await until(res.body.job.id, ended);
    expect(j.status, j.error ?? '').toBe('done');
    if (j.result?.kind !== 'plan') throw new Error('not a plan result');
    const own = checkDesignText(example, 'frontend.fold.yaml', null).design;
    expect(j.result.current).toMatchObject({ factor: own.factor, objective: { registers: own.registers!.minimum } });
  }, 60_000);

  it('sweeps factors and marks a Pareto front', async () => {
    const res = await post({ kind: 'sweep', design: { text: UNPLACED }, factors: [2, 3, 4], timeLimitSeconds: 3 });
    const j = await until(res.body.job.id, ended);
    expect(j.status, j.error ?? '').toBe('done');
    if (j.result?.kind !== 'sweep') throw new Error('not a sweep result');
    expect(j.result.rows.map((r) => r.factor)).toEqual([2, 3, 4]);
    expect(j.result.rows.some((r) => r.pareto)).toBe(true);
  }, 60_000);

  it('fails a design that does not load with its line and column', async () => {
    const broken = UNPLACED.replace('factor: 4', 'factor: four');
    const res = await post({ kind: 'plan', design: { text: broken } });
    const j = await until(res.body.job.id, ended);
    expect(j.status).toBe('failed');
    expect(j.error).toMatch(/line \d+, column \d+/);
  }, 60_000);
});

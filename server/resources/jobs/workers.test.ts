// Jobs in real worker processes against the real PostgreSQL queue: two workers share the queue
// without taking the same job; a worker killed (SIGKILL) mid-job leaves the job retried, or after
// the last try failed with a message, never lost and never completed twice; a worker that comes
// back after the queue gave its job away cannot complete it. The expectations are the queue's
// contract of docs/server.md (section Jobs): at-least-once delivery with an exactly-once record
// of completion (common practice for job queues, no source).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { JobDetail } from '../../../shared/report/api';
import { cookieFor } from '../../test/factories';
import type { TestServer } from '../../test/server';
import { startJobTestServer, UNPLACED } from '../../test/jobs';
import { startWorkerProcess, TEST_JOB_SETTINGS, type WorkerProcess } from '../../test/workers';
import type { Project, User } from '../../db/models';


let t: TestServer;
let project: Project;
let engineer: User;
const workers: WorkerProcess[] = [];

beforeAll(async () => {
  ({ t, project, engineer } = await startJobTestServer());
}, 60_000);

afterAll(async () => {
  for (const w of workers) await w.kill();
  await t?.close();
});

async function worker(holdMs = 0): Promise<WorkerProcess> {
  const w = await startWorkerProcess(t.db, { holdMs });
  workers.push(w);
  return w;
}

async function start(timeLimitSeconds = 1): Promise<number> {
  const res = await t.http().post(`/api/projects/${project.slug}/jobs`).set('Cookie', cookieFor(t.ctx, engineer))
    .send({ kind: 'plan', design: { text: UNPLACED, file: 'frontend.fold.yaml' }, timeLimitSeconds });
  expect(res.status, res.text).toBe(201);
  return res.body.job.id;
}

async function job(id: number): Promise<JobDetail> {
  const res = await t.http().get(`/api/jobs/${id}`).set('Cookie', cookieFor(t.ctx, engineer));
  expect(res.status).toBe(200);
  return res.body.job;
}

/** Polls until the job satisfies `done` (the test's own timeout bounds the wait). */
async function until(id: number, done: (j: JobDetail) => boolean): Promise<JobDetail> {
  for (;;) {
    const j = await job(id);
    if (done(j)) return j;
    await new Promise((r) => setTimeout(r, 200));
  }
}

const ended = (j: JobDetail) => ['done', 'failed', 'cancelled'].includes(j.status);

describe('jobs in worker processes', () => {
  it('two workers share one queue and never take the same job', async () => {
    // Each worker holds a job a moment before planning it, so both are busy at once.
    const [a, b] = await Promise.all([worker(400), worker(400)]);
    const ids = [];
    for (let i = 0; i < 4; i++) ids.push(await start());
    const jobs = await Promise.all(ids.map((id) => until(id, ended)));
    for (const j of jobs) {
      expect(j.status, j.error ?? '').toBe('done');
      expect(j.attempts).toHaveLength(1);
      expect(j.attempts[0]!.outcome).toBe('done');
      expect(j.result?.kind).toBe('plan');
    }
    const takers = new Set(jobs.map((j) => j.attempts[0]!.worker));
    expect([...takers].sort()).toEqual([a.name, b.name].sort());
    await a.kill('SIGTERM');
    await b.kill('SIGTERM');
  }, 120_000);

  it('retries a job whose worker was killed, and completes it once', async () => {
    const doomed = await worker(120_000);
    const id = await start();
    await until(id, (j) => j.status === 'running' && j.attempts.length === 1);
    await doomed.kill('SIGKILL');
    const rescuer = await worker(0);
    const j = await until(id, ended);
    expect(j.status, j.error ?? '').toBe('done');
    expect(j.attempts.map((a) => [a.attempt, a.worker, a.outcome])).toEqual([[1, doomed.name, 'lost'], [2, rescuer.name, 'done']]);
    expect(j.attempts[0]!.message).toMatch(/stopped answering/);
    expect(j.result?.kind).toBe('plan');
    await rescuer.kill('SIGTERM');
  }, 120_000);

  it('fails a job with a message when every attempt loses its worker', async () => {
    const first = await worker(120_000);
    const id = await start();
    await until(id, (j) => j.attempts.length === 1);
    await first.kill('SIGKILL');
    const second = await worker(120_000);
    await until(id, (j) => j.attempts.length === 2);
    await second.kill('SIGKILL');
    const third = await worker(0);
    const j = await until(id, ended);
    expect(j.status).toBe('failed');
    expect(j.error).toMatch(/tried 2 times and each time its worker stopped answering/);
    expect(j.attempts.map((a) => a.outcome)).toEqual(['lost', 'lost']);
    expect(j.result).toBeNull();
    await third.kill('SIGTERM');
  }, 120_000);

  it('does not let a worker that comes back late complete a job a later attempt took', async () => {
    // The slow worker holds the job well past its expiry (budget 1 s + grace), then plans and tries to finish.
    const slow = await worker((1 + TEST_JOB_SETTINGS.graceSeconds) * 1000 + 8000);
    const id = await start(1);
    await until(id, (j) => j.attempts.length === 1);
    const fast = await worker(0);
    const j = await until(id, (x) => ended(x) && x.attempts.every((a) => a.outcome !== 'running'));
    expect(j.status, j.error ?? '').toBe('done');
    expect(j.attempts.map((a) => [a.attempt, a.worker, a.outcome])).toEqual([[1, slow.name, 'lost'], [2, fast.name, 'done']]);
    // The slow worker did finish its planning later, and was refused.
    await until(id, () => /attempt 1 discarded/.test(slow.output()));
    expect((await job(id)).attempts.filter((a) => a.outcome === 'done')).toHaveLength(1);
    await slow.kill('SIGTERM');
    await fast.kill('SIGTERM');
  }, 120_000);
});
